import { useState } from "react";
import { StyleSheet, Switch, View } from "react-native";
import { useRouter } from "expo-router";
import { Button, Card, Field, Heading, Notice, Txt } from "./ui";
import { space } from "./theme";
import { useCreateStudy } from "../hooks/use-study";
import { mutateThen } from "../hooks/mutate-then";

export function NewStudyScreen() {
  const [name, setName] = useState("");
  const [description, setDescription] = useState("");
  const [restricted, setRestricted] = useState(false);
  const create = useCreateStudy();
  const router = useRouter();
  return (
    <View style={styles.root}>
      <Heading>New study</Heading>
      <Card>
        <Field
          label="Name"
          value={name}
          onChangeText={setName}
          placeholder="e.g. Load effects, cohort 2"
          testID="study-name"
        />
        <Field
          label="Description (optional)"
          value={description}
          onChangeText={setDescription}
          multiline
          style={{ minHeight: 72, paddingTop: space.sm }}
        />
        <View style={styles.switchRow}>
          <View style={{ flexShrink: 1 }}>
            <Txt kind="label">Restrict participant-level rows</Txt>
            <Txt kind="caption">Viewers will see counts and results only.</Txt>
          </View>
          <Switch
            value={restricted}
            onValueChange={setRestricted}
            accessibilityLabel="Restrict participant-level rows"
          />
        </View>
        {create.error ? <Notice tone="danger">{create.error.message}</Notice> : null}
        <Button
          label="Create study"
          disabled={name.trim() === ""}
          busy={create.isPending}
          testID="create-study"
          onPress={() =>
            mutateThen(
              create,
              { name: name.trim(), description: description.trim() || undefined, restricted },
              (study) => router.replace(`/studies/${study.id}/data`),
            )
          }
        />
        <Txt kind="caption">You become the study's Owner.</Txt>
      </Card>
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.lg },
  switchRow: {
    flexDirection: "row",
    alignItems: "center",
    justifyContent: "space-between",
    gap: space.md,
  },
});
