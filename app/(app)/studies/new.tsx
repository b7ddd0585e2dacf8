import { NewStudyScreen } from "../../../components/new-study-screen";

export default function NewStudyRoute() {
  return <NewStudyScreen />;
}
