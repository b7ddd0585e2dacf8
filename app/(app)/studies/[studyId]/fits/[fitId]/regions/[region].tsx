import { useLocalSearchParams } from "expo-router";
import { RegionScreen } from "../../../../../../../components/fit/region-screen";

export default function RegionRoute() {
  const { studyId, fitId, region } = useLocalSearchParams<{
    studyId: string;
    fitId: string;
    region: string;
  }>();
  return <RegionScreen studyId={String(studyId)} fitId={String(fitId)} region={String(region)} />;
}
