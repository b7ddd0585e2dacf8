import { StyleSheet, View } from "react-native";
import { useRouter } from "expo-router";
import { Badge, Button, Card, Empty, Failure, Notice, Pending, Txt } from "./ui";
import { palette, space } from "./theme";
import { methodOf, questionOf, regionsOf } from "./fit/describe-model";
import { can, useStudy } from "../hooks/use-study";
import { useModels, type ModelView } from "../hooks/use-models";
import { useRunFit } from "../hooks/use-fits";
import { PlanCard } from "./plan-card";
import { ruleText } from "../contract/exclusion-rules";
import { mutateThen } from "../hooks/mutate-then";

/** Saved models of a study, each a question in plain words, with a run button. */
export function ModelsScreen(props: { studyId: string }) {
  const study = useStudy(props.studyId);
  const models = useModels(props.studyId);
  const router = useRouter();
  const writable = can(study.data, "models.write");
  return (
    <View style={styles.root}>
      <PlanCard studyId={props.studyId} />
      {writable ? (
        <Button
          label="New model"
          onPress={() => router.push(`/studies/${props.studyId}/models/new`)}
          testID="new-model"
          style={styles.newButton}
        />
      ) : null}
      {models.isPending ? (
        <Pending />
      ) : models.isError ? (
        <Failure error={models.error} onRetry={() => models.refetch()} />
      ) : models.data.length === 0 ? (
        <Empty title="No models yet">
          <Txt style={{ color: palette.muted, textAlign: "center" }}>
            A model is a saved question: is the effect there, do groups differ, does it track a
            trait.
          </Txt>
        </Empty>
      ) : (
        models.data.map((model) => (
          <ModelCard
            key={model.id}
            studyId={props.studyId}
            model={model}
            canRun={can(study.data, "fits.run")}
            canWrite={writable}
          />
        ))
      )}
    </View>
  );
}

function ModelCard({
  studyId,
  model,
  canRun,
  canWrite,
}: {
  studyId: string;
  model: ModelView;
  canRun: boolean;
  canWrite: boolean;
}) {
  const run = useRunFit(studyId);
  const router = useRouter();
  return (
    <Card testID="model-card">
      <View style={styles.head}>
        <Txt kind="lead" style={{ fontWeight: "600", flexShrink: 1 }}>
          {model.name}
        </Txt>
        <Badge label={`${model.fitCount} fit${model.fitCount === 1 ? "" : "s"}`} />
      </View>
      <Txt>{questionOf(model.spec)}</Txt>
      <Txt kind="small" style={{ color: palette.muted }}>
        {regionsOf(model.spec)} · {methodOf(model.spec)}
      </Txt>
      {model.spec.exclusionRules && model.spec.exclusionRules.length > 0 ? (
        <Txt kind="small" style={{ color: palette.muted }} testID="model-card-rules">
          Leaves out by rule: {model.spec.exclusionRules.map(ruleText).join("; ")}
        </Txt>
      ) : null}
      {model.caution ? (
        <Notice tone="caution" title="Circular region selection">
          {model.caution}
        </Notice>
      ) : null}
      {run.error ? <Notice tone="danger">{run.error.message}</Notice> : null}
      <View style={styles.actions}>
        {canRun ? (
          <Button
            label="Run fit"
            onPress={() =>
              mutateThen(run, model.id, (fit) => router.push(`/studies/${studyId}/fits/${fit.id}`))
            }
            busy={run.isPending}
            testID="run-fit"
          />
        ) : null}
        <Button
          label="See fits"
          variant="secondary"
          onPress={() => router.push(`/studies/${studyId}/fits`)}
        />
        {canWrite && model.spec.kind !== "specification-curve" ? (
          <Button
            label="New model from this one"
            variant="secondary"
            testID="model-copy"
            onPress={() =>
              router.push({
                pathname: "/studies/[studyId]/models/new",
                params: { studyId, from: model.id },
              })
            }
          />
        ) : null}
      </View>
    </Card>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.md },
  newButton: { alignSelf: "flex-start" },
  head: {
    flexDirection: "row",
    justifyContent: "space-between",
    alignItems: "center",
    gap: space.sm,
  },
  actions: { flexDirection: "row", flexWrap: "wrap", gap: space.sm },
});
