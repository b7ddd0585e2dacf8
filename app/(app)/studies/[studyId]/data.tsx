import { useLocalSearchParams } from "expo-router";
import { DataScreen } from "../../../../components/data-screen";

export default function DataRoute() {
  const { studyId } = useLocalSearchParams<{ studyId: string }>();
  return <DataScreen studyId={String(studyId)} />;
}
