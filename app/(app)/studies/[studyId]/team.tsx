import { useLocalSearchParams } from "expo-router";
import { TeamScreen } from "../../../../components/team-screen";

export default function TeamRoute() {
  const { studyId } = useLocalSearchParams<{ studyId: string }>();
  return <TeamScreen studyId={String(studyId)} />;
}
