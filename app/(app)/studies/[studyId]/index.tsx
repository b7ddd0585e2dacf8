import { Redirect, useLocalSearchParams } from "expo-router";

export default function StudyIndexRoute() {
  const { studyId } = useLocalSearchParams<{ studyId: string }>();
  return <Redirect href={`/studies/${String(studyId)}/data`} />;
}
