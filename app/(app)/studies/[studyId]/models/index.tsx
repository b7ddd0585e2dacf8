import { useLocalSearchParams } from "expo-router";
import { ModelsScreen } from "../../../../../components/models-screen";

export default function ModelsRoute() {
  const { studyId } = useLocalSearchParams<{ studyId: string }>();
  return <ModelsScreen studyId={String(studyId)} />;
}
