import { useLocalSearchParams } from "expo-router";
import { FitScreen } from "../../../../../../components/fit-screen";

export default function FitRoute() {
  const { studyId, fitId, region } = useLocalSearchParams<{
    studyId: string;
    fitId: string;
    region?: string;
  }>();
  return (
    <FitScreen
      studyId={String(studyId)}
      fitId={String(fitId)}
      region={typeof region === "string" ? region : undefined}
    />
  );
}
