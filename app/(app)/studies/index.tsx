import { StudiesScreen } from "../../../components/studies-screen";

export default function StudiesRoute() {
  return <StudiesScreen />;
}
