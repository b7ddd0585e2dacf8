import { useLocalSearchParams } from "expo-router";
import { ActivityScreen } from "../../../../components/activity-screen";
import { RoleGate } from "../../../../components/role-refusal";

export default function ActivityRoute() {
  const { studyId } = useLocalSearchParams<{ studyId: string }>();
  const id = String(studyId);
  return (
    <RoleGate
      studyId={id}
      action="activity.list"
      doing="see the study's activity"
      changes={false}
      back={{ href: `/studies/${id}/data`, label: "Back to the study" }}
    >
      <ActivityScreen studyId={id} />
    </RoleGate>
  );
}
