import { NotFoundScreen } from "../components/not-found-screen";

export default function NotFoundRoute() {
  return <NotFoundScreen />;
}
