import { useLocalSearchParams } from "expo-router";
import { ModelForm } from "../../../../../components/model-form";
import { RoleGate } from "../../../../../components/role-refusal";

export default function NewModelRoute() {
  const { studyId, from } = useLocalSearchParams<{ studyId: string; from?: string }>();
  const id = String(studyId);
  return (
    <RoleGate
      studyId={id}
      action="models.write"
      doing="build models"
      changes
      back={{ href: `/studies/${id}/models`, label: "Back to Models" }}
    >
      <ModelForm studyId={id} from={from ? String(from) : undefined} />
    </RoleGate>
  );
}
