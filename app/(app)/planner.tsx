import { PlannerScreen } from "../../components/planner-screen";

export default function PlannerRoute() {
  return <PlannerScreen />;
}
