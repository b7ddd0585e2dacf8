import { Slot, useLocalSearchParams } from "expo-router";
import { StudyFrame } from "../../../../components/study-frame";

export default function StudyLayout() {
  const { studyId } = useLocalSearchParams<{ studyId: string }>();
  return (
    <StudyFrame studyId={String(studyId)}>
      <Slot />
    </StudyFrame>
  );
}
