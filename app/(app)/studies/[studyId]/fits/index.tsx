import { useLocalSearchParams } from "expo-router";
import { FitsScreen } from "../../../../../components/fits-screen";

export default function FitsRoute() {
  const { studyId } = useLocalSearchParams<{ studyId: string }>();
  return <FitsScreen studyId={String(studyId)} />;
}
