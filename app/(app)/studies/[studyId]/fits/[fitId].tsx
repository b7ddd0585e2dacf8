import { useLocalSearchParams } from "expo-router";
import { FitScreen } from "../../../../../components/fit-screen";

export default function FitRoute() {
  const { studyId, fitId } = useLocalSearchParams<{ studyId: string; fitId: string }>();
  return <FitScreen studyId={String(studyId)} fitId={String(fitId)} />;
}
