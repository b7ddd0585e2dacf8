import { useLocalSearchParams } from "expo-router";
import { ActivityScreen } from "../../../../components/activity-screen";

export default function ActivityRoute() {
  const { studyId } = useLocalSearchParams<{ studyId: string }>();
  return <ActivityScreen studyId={String(studyId)} />;
}
