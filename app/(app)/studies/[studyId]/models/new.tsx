import { useLocalSearchParams } from "expo-router";
import { ModelForm } from "../../../../../components/model-form";

export default function NewModelRoute() {
  const { studyId } = useLocalSearchParams<{ studyId: string }>();
  return <ModelForm studyId={String(studyId)} />;
}
