/**
 * New model: a short form for the question (kind, regions, predictor or
 * grouping, covariates) and how to answer it (estimator, inference,
 * correction, weights; for a prediction: folds, repeats, penalty and
 * permutation test instead). Validation is the API's own schema; the fit rules
 * (contract/fit-rules.ts) are judged as the choices change against
 * what the form knows of the data (regions, columns and their types,
 * sessions, standard errors, the group's levels), and what only the
 * values decide is said before the model is saved or run. Started from
 * an existing model ("New model from this one"), the form takes its
 * fields, and lists its exclusion rules with a Remove button for each.
 */
import { useMemo, useState } from "react";
import { StyleSheet, View } from "react-native";
import { useRouter } from "expo-router";
import { Choice, MultiChoice } from "./choice";
import { Button, Card, Failure, Field, Heading, Notice, Pending, Txt } from "./ui";
import { palette, space } from "./theme";
import { questionOf } from "./fit/describe-model";
import {
  useColumnLevels,
  useCreateModel,
  useModel,
  useModelInputs,
  type ModelInputs,
  type ModelView,
} from "../hooks/use-models";
import { type ExclusionRule, ruleText } from "../contract/exclusion-rules";
import { useRunFit } from "../hooks/use-fits";
import {
  circularityCaution,
  estimatorsByKind,
  modelCreateSchema,
  regionSelectionLabels,
  regionSelectionQuestion,
  regionSelections,
  type ModelCreateInput,
  type RegionSelection,
} from "../contract/model-form";
import { dataPreconditions, dataProblems, type DataShape } from "../contract/fit-rules";
import { type ModelSpec, modelSpecSchema } from "../contract/spec";
import {
  correctionLabels,
  correctionOrder,
  estimatorLabels,
  inferenceLabels,
  kindLabels,
  optionsOf,
} from "../contract/labels";
import { mutateThen } from "../hooks/mutate-then";

type Kind = ModelSpec["kind"];
type Estimator = ModelSpec["estimator"];

// A specification curve's alternatives have no editor in this form yet: it is set up through a recipe or the API.
const kindOptions = optionsOf(
  kindLabels,
  (Object.keys(kindLabels) as Kind[]).filter((k) => k !== "specification-curve"),
);
const inferenceOptions = optionsOf(inferenceLabels, ["parametric", "permutation", "bootstrap"]);
const predictionInferenceOptions = [
  { value: "permutation" as const, label: "Permutation test" },
  { value: "none" as const, label: "No test" },
];
type FoldsChoice = "10" | "5" | "leave-one-out";
const foldsOptions: { value: FoldsChoice; label: string }[] = [
  { value: "10", label: "10 folds" },
  { value: "5", label: "5 folds" },
  { value: "leave-one-out", label: "Leave one out" },
];
const correctionOptions = optionsOf(correctionLabels, correctionOrder);

/** `from`: a model of the study whose fields the new model starts from (its rules included). */
export function ModelForm(props: { studyId: string; from?: string }) {
  const inputs = useModelInputs(props.studyId);
  const from = useModel(props.studyId, props.from ?? "");
  const starting = Boolean(props.from);
  if (inputs.isPending || (starting && from.isPending))
    return <Pending label="Reading the study's tables…" />;
  if (inputs.isError) return <Failure error={inputs.error} onRetry={() => inputs.refetch()} />;
  if (starting && from.isError)
    return <Failure error={from.error} onRetry={() => from.refetch()} />;
  if (inputs.data.regions.length === 0) {
    return (
      <Notice tone="caution" title="No brain table yet">
        Upload and confirm a brain table in the Data section before building a model.
      </Notice>
    );
  }
  const start = starting && from.data?.spec.kind !== "specification-curve" ? from.data : undefined;
  return <Form studyId={props.studyId} inputs={inputs.data} start={start} />;
}

function Form({
  studyId,
  inputs,
  start,
}: {
  studyId: string;
  inputs: ModelInputs;
  start?: ModelView;
}) {
  const router = useRouter();
  const s0 = start?.spec;
  const [name, setName] = useState(start ? `${start.name} (copy)` : "");
  const [kind, setKind] = useState<Kind>(s0?.kind ?? "association");
  const [allRegions, setAllRegions] = useState(!s0?.regions || s0.regions.length === 0);
  const [regions, setRegions] = useState<string[]>(s0?.regions ?? []);
  const [predictor, setPredictor] = useState<string | null>(
    s0?.predictor ?? inputs.numericColumns[0] ?? null,
  );
  const [group, setGroup] = useState<string | null>(
    (s0?.kind === "two-group" ? s0.group : undefined) ?? inputs.categoricalColumns[0] ?? null,
  );
  const [levels, setLevels] = useState<string[]>(s0?.levels ? [...s0.levels] : []);
  const [covariates, setCovariates] = useState<string[]>(s0?.covariates ?? []);
  const [interactionWith, setInteractionWith] = useState<string>(
    s0?.kind === "association" && s0.interaction ? (s0.group ?? "") : "",
  );
  const [estimator, setEstimator] = useState<Estimator>(s0?.estimator ?? "ols");
  const [inference, setInference] = useState<ModelSpec["inference"]>(s0?.inference ?? "parametric");
  const [resamples, setResamples] = useState(String(s0?.resamples ?? 10000));
  const [seed, setSeed] = useState(String(s0?.seed ?? 1));
  const [correction, setCorrection] = useState<ModelSpec["correction"]>(s0?.correction ?? "holm");
  const [weighted, setWeighted] = useState(s0?.weights === "first-level-se");
  const [tau2Method, setTau2Method] = useState<"reml" | "dl">(s0?.tau2Method ?? "reml");
  const [knappHartung, setKnappHartung] = useState(s0?.smallSample === "knapp-hartung");
  const [selection, setSelection] = useState<RegionSelection | null>(
    start?.regionSelection ?? null,
  );
  const [rules, setRules] = useState<ExclusionRule[]>(s0?.exclusionRules ?? []);
  const [folds, setFolds] = useState<FoldsChoice>("10");
  const [repeats, setRepeats] = useState("10");
  const [fixedPenalty, setFixedPenalty] = useState(false);
  const [lambda, setLambda] = useState("1");
  const [stratify, setStratify] = useState<string>("");
  const [problems, setProblems] = useState<{ field: string; message: string }[]>([]);
  const create = useCreateModel(studyId);
  const runFit = useRunFit(studyId);
  const levelsQuery = useColumnLevels(
    studyId,
    kind === "two-group" ? (group ?? undefined) : undefined,
  );

  const estimators = estimatorsByKind[kind];
  const predicting = kind === "prediction";
  /** The kind's own defaults of inference and resamples (a prediction: permutation, 1,000). */
  const chooseKind = (next: Kind) => {
    if (next === kind) return;
    if (next === "prediction") {
      if (inference !== "permutation" && inference !== "none") setInference("permutation");
      if (resamples === "10000") setResamples("1000");
    } else if (kind === "prediction") {
      if (inference === "none") setInference("parametric");
      if (resamples === "1000") setResamples("10000");
    }
    setKind(next);
  };
  const covariateOptions = useMemo(
    () =>
      [...inputs.numericColumns, ...(kind === "prediction" ? [] : inputs.categoricalColumns)]
        .filter((c) => c !== predictor || (kind !== "association" && kind !== "prediction"))
        .filter((c) => c !== group || kind !== "two-group")
        .filter((c) => c !== interactionWith || kind !== "association")
        .map((c) => ({ value: c, label: c })),
    [inputs, predictor, group, kind, interactionWith],
  );

  const spec = (): ModelCreateInput["spec"] =>
    predicting
      ? {
          kind,
          regions: allRegions ? undefined : regions,
          predictor: predictor ?? undefined,
          group: stratify || undefined,
          covariates: covariates.filter((c) => covariateOptions.some((o) => o.value === c)),
          inference,
          resamples: Number(resamples),
          seed: Number(seed),
          correction: "none",
          folds: folds === "leave-one-out" ? folds : Number(folds),
          repeats: folds === "leave-one-out" ? 1 : Number(repeats),
          lambda: fixedPenalty ? Number(lambda) : undefined,
        }
      : {
          kind,
          regions: allRegions ? undefined : regions,
          predictor: kind === "association" ? (predictor ?? undefined) : undefined,
          group:
            kind === "two-group"
              ? (group ?? undefined)
              : kind === "association" && interactionWith
                ? interactionWith
                : undefined,
          interaction: kind === "association" && interactionWith !== "",
          levels: kind === "two-group" && levels.length === 2 ? [levels[0], levels[1]] : undefined,
          covariates:
            kind === "reliability"
              ? []
              : covariates.filter((c) => covariateOptions.some((o) => o.value === c)),
          estimator: estimators.includes(estimator) ? estimator : "ols",
          inference: kind === "reliability" ? "parametric" : inference,
          resamples: Number(resamples),
          seed: Number(seed),
          correction,
          weights: weighted ? "first-level-se" : "none",
          tau2Method,
          smallSample: knappHartung ? "knapp-hartung" : "none",
          ...((kind === "association" || kind === "two-group") && rules.length > 0
            ? { exclusionRules: rules }
            : {}),
        };

  const save = (thenRun: boolean) => {
    const body = { name: name.trim(), spec: spec(), regionSelection: selection ?? undefined };
    const checked = modelCreateSchema.safeParse(body);
    if (!checked.success) {
      setProblems(
        checked.error.issues.map((i) => ({
          field: i.path.filter((p) => p !== "spec").join(".") || "model",
          message: i.message,
        })),
      );
      return;
    }
    setProblems([]);
    mutateThen(create, checked.data as ModelCreateInput, (model) => {
      if (!thenRun) {
        router.replace(`/studies/${studyId}/models`);
        return;
      }
      mutateThen(runFit, model.id, (fit) => router.replace(`/studies/${studyId}/fits/${fit.id}`));
    });
  };

  const preview = spec();
  const parsedPreview = modelSpecSchema.safeParse(preview);
  const sheetKnown = inputs.numericColumns.length + inputs.categoricalColumns.length > 0;
  const shape: DataShape = {
    regions: inputs.regions,
    sessions: inputs.hasSessions ? undefined : 0,
    hasStandardErrors: inputs.hasStandardErrors,
    ...(sheetKnown
      ? { numericColumns: inputs.numericColumns, categoricalColumns: inputs.categoricalColumns }
      : {}),
    levelsOf: (column) => (column === group && levelsQuery.data ? levelsQuery.data : undefined),
  };
  const dataIssues = parsedPreview.success ? dataProblems(parsedPreview.data, shape) : [];
  const judged = parsedPreview.success ? dataPreconditions(parsedPreview.data) : null;
  return (
    <View style={styles.root}>
      <Heading>New model</Heading>
      <Card>
        <Field
          label="Name"
          value={name}
          onChangeText={setName}
          placeholder="e.g. Accuracy, adjusted for age and motion"
          testID="model-name"
        />
        <Choice
          label="Question"
          options={kindOptions}
          value={kind}
          onChange={chooseKind}
          testID="model-kind"
        />
        <Txt kind="small" style={{ color: palette.inkSoft }} testID="model-question">
          {questionOf({
            ...preview,
            covariates: preview.covariates ?? [],
            interaction: preview.interaction ?? false,
          } as ModelSpec)}
        </Txt>
      </Card>

      {rules.length > 0 && (kind === "association" || kind === "two-group") ? (
        <Card testID="model-rules">
          <Heading level={3}>Exclusion rules</Heading>
          <Txt kind="small" style={{ color: palette.inkSoft }}>
            Part of the model: a participant meeting a rule is left out of its fits (a missing value
            meets none).
          </Txt>
          {rules.map((rule, k) => (
            <View key={ruleText(rule)} style={styles.ruleRow} testID="model-rule">
              <Txt style={{ flexShrink: 1 }}>{ruleText(rule)}</Txt>
              <Button
                label="Remove"
                variant="secondary"
                accessibilityLabel={`Remove the rule ${ruleText(rule)}`}
                onPress={() => setRules(rules.filter((_, j) => j !== k))}
              />
            </View>
          ))}
        </Card>
      ) : null}

      <Card>
        <Heading level={3}>Regions</Heading>
        <Choice
          label="Which regions"
          options={[
            { value: "all", label: `All ${inputs.regions.length}` },
            { value: "chosen", label: "Choose" },
          ]}
          value={allRegions ? "all" : "chosen"}
          onChange={(v) => setAllRegions(v === "all")}
        />
        {!allRegions ? (
          <MultiChoice
            label="Regions"
            options={inputs.regions.map((r) => ({ value: r, label: r }))}
            values={regions}
            onChange={setRegions}
          />
        ) : null}
        <Choice
          label={regionSelectionQuestion}
          options={regionSelections.map((v) => ({ value: v, label: regionSelectionLabels[v] }))}
          value={selection}
          onChange={setSelection}
          testID="region-selection"
        />
        {selection === "same-data" ? (
          <Notice tone="caution" title="Circular region selection" testID="circularity-caution">
            {circularityCaution}
          </Notice>
        ) : null}
      </Card>

      {predicting ? (
        <Card>
          <Heading level={3}>Trait</Heading>
          {inputs.numericColumns.length === 0 ? (
            <Notice tone="caution">The participant sheet has no numeric column to predict.</Notice>
          ) : (
            <Choice
              label="Trait to predict"
              options={inputs.numericColumns.map((c) => ({ value: c, label: c }))}
              value={predictor}
              onChange={setPredictor}
              testID="model-predictor"
            />
          )}
          <MultiChoice
            label="Confounds (removed inside each training fold)"
            options={covariateOptions}
            values={covariates}
            onChange={setCovariates}
            testID="model-covariates"
          />
          {inputs.categoricalColumns.length > 0 ? (
            <Choice
              label="Balance the folds by a group (optional)"
              options={[
                { value: "", label: "No" },
                ...inputs.categoricalColumns.map((c) => ({ value: c, label: `By ${c}` })),
              ]}
              value={stratify}
              onChange={setStratify}
              testID="model-stratify"
            />
          ) : null}
        </Card>
      ) : kind === "association" || kind === "two-group" ? (
        <Card>
          <Heading level={3}>{kind === "association" ? "Trait" : "Groups"}</Heading>
          {kind === "association" ? (
            inputs.numericColumns.length === 0 ? (
              <Notice tone="caution">
                The participant sheet has no numeric column to use as a trait.
              </Notice>
            ) : (
              <Choice
                label="Trait (predictor)"
                options={inputs.numericColumns.map((c) => ({ value: c, label: c }))}
                value={predictor}
                onChange={setPredictor}
                testID="model-predictor"
              />
            )
          ) : (
            <>
              <Choice
                label="Grouping column"
                options={inputs.categoricalColumns.map((c) => ({ value: c, label: c }))}
                value={group}
                onChange={(g) => {
                  setGroup(g);
                  setLevels([]);
                }}
                testID="model-group"
              />
              {levelsQuery.data ? (
                <MultiChoice
                  label="Compare (first minus second; pick two)"
                  options={levelsQuery.data.map((l) => ({ value: l, label: l }))}
                  values={levels}
                  onChange={(v) => setLevels(v.slice(-2))}
                />
              ) : null}
            </>
          )}
          <MultiChoice
            label="Nuisance covariates"
            options={covariateOptions}
            values={covariates}
            onChange={setCovariates}
            testID="model-covariates"
          />
          {kind === "association" && inputs.categoricalColumns.length > 0 ? (
            <Choice
              label="Does the slope differ by group? (group × trait interaction)"
              options={[
                { value: "", label: "No" },
                ...inputs.categoricalColumns.map((c) => ({ value: c, label: `By ${c}` })),
              ]}
              value={interactionWith}
              onChange={setInteractionWith}
            />
          ) : null}
        </Card>
      ) : kind === "one-sample" ? (
        <Card>
          <MultiChoice
            label="Nuisance covariates (numeric, centred)"
            options={inputs.numericColumns.map((c) => ({ value: c, label: c }))}
            values={covariates}
            onChange={setCovariates}
            testID="model-covariates"
          />
        </Card>
      ) : null}

      {predicting ? (
        <Card>
          <Heading level={3}>How to answer it</Heading>
          <Txt kind="small" style={{ color: palette.inkSoft }}>
            Ridge regression, fitted on the training folds only and scored on the people left out.
          </Txt>
          <Choice
            label="Cross-validation"
            options={foldsOptions}
            value={folds}
            onChange={setFolds}
            testID="model-folds"
          />
          {folds !== "leave-one-out" ? (
            <Field
              label="Repeats (new random split into folds each time)"
              value={repeats}
              onChangeText={setRepeats}
              inputMode="numeric"
              testID="model-repeats"
            />
          ) : null}
          <Choice
            label="Penalty (λ)"
            options={[
              { value: "cv", label: "Chosen by cross-validation" },
              { value: "fixed", label: "Fixed value" },
            ]}
            value={fixedPenalty ? "fixed" : "cv"}
            onChange={(v) => setFixedPenalty(v === "fixed")}
            testID="model-penalty"
          />
          {fixedPenalty ? (
            <Field
              label="λ"
              value={lambda}
              onChangeText={setLambda}
              inputMode="decimal"
              testID="model-lambda"
            />
          ) : null}
          <Choice
            label="Test"
            options={predictionInferenceOptions}
            value={inference === "none" ? "none" : "permutation"}
            onChange={setInference}
            testID="model-inference"
          />
          <View style={styles.pair}>
            {inference !== "none" ? (
              <View style={styles.half}>
                <Field
                  label="Permutations"
                  value={resamples}
                  onChangeText={setResamples}
                  inputMode="numeric"
                  testID="model-resamples"
                />
              </View>
            ) : null}
            <View style={styles.half}>
              <Field label="Seed" value={seed} onChangeText={setSeed} inputMode="numeric" />
            </View>
          </View>
        </Card>
      ) : kind !== "reliability" ? (
        <Card>
          <Heading level={3}>How to answer it</Heading>
          <Choice
            label="Estimator"
            options={estimators.map((e) => ({ value: e, label: estimatorLabels[e] }))}
            value={estimators.includes(estimator) ? estimator : "ols"}
            onChange={setEstimator}
            testID="model-estimator"
          />
          <Choice
            label="Inference"
            options={inferenceOptions}
            value={inference}
            onChange={setInference}
            testID="model-inference"
          />
          {inference !== "parametric" ? (
            <View style={styles.pair}>
              <View style={styles.half}>
                <Field
                  label="Resamples"
                  value={resamples}
                  onChangeText={setResamples}
                  inputMode="numeric"
                />
              </View>
              <View style={styles.half}>
                <Field label="Seed" value={seed} onChangeText={setSeed} inputMode="numeric" />
              </View>
            </View>
          ) : null}
          <Choice
            label="Correction over regions"
            options={correctionOptions}
            value={correction}
            onChange={setCorrection}
            testID="model-correction"
          />
          {inputs.hasStandardErrors ? (
            <>
              <Choice
                label="Weights"
                options={[
                  { value: "none", label: "Equal" },
                  { value: "se", label: "First-level standard errors" },
                ]}
                value={weighted ? "se" : "none"}
                onChange={(v) => setWeighted(v === "se")}
              />
              {weighted ? (
                <>
                  <Choice
                    label="Between-participant variance τ²"
                    options={[
                      { value: "reml", label: "REML" },
                      { value: "dl", label: "DerSimonian–Laird" },
                    ]}
                    value={tau2Method}
                    onChange={setTau2Method}
                  />
                  <Choice
                    label="Small-sample adjustment"
                    options={[
                      { value: "none", label: "None" },
                      { value: "kh", label: "Knapp–Hartung" },
                    ]}
                    value={knappHartung ? "kh" : "none"}
                    onChange={(v) => setKnappHartung(v === "kh")}
                  />
                </>
              ) : null}
            </>
          ) : null}
        </Card>
      ) : null}

      {dataIssues.length > 0 ? (
        <Notice
          tone="danger"
          title="Not possible with the study's current data"
          testID="model-data-problems"
        >
          {dataIssues.map((p) => `${p.field}: ${p.message}`).join("\n")}
        </Notice>
      ) : null}
      {judged ? (
        <Notice title="Judged against the data" testID="model-data-preconditions">
          {[
            "When you save, the model is checked against the study's current data:",
            ...judged.beforeRun.map((line) => `• ${line}`),
            "Only when the fit runs:",
            ...judged.atRun.map((line) => `• ${line}`),
          ].join("\n")}
        </Notice>
      ) : null}
      {problems.length > 0 ? (
        <Notice tone="danger" title="Check these fields" testID="model-problems">
          {problems.map((p) => `${p.field}: ${p.message}`).join("\n")}
        </Notice>
      ) : null}
      {create.error ? <Notice tone="danger">{create.error.message}</Notice> : null}
      {runFit.error ? <Notice tone="danger">{runFit.error.message}</Notice> : null}
      <View style={styles.buttons}>
        <Button
          label="Save and run"
          onPress={() => save(true)}
          busy={create.isPending || runFit.isPending}
          testID="save-and-run"
        />
        <Button
          label="Save"
          variant="secondary"
          onPress={() => save(false)}
          busy={create.isPending}
          testID="save-model"
        />
      </View>
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.lg, maxWidth: 760 },
  pair: { flexDirection: "row", flexWrap: "wrap", gap: space.md },
  half: { flexGrow: 1, flexBasis: 140 },
  buttons: { flexDirection: "row", flexWrap: "wrap", gap: space.md },
  ruleRow: {
    flexDirection: "row",
    alignItems: "center",
    justifyContent: "space-between",
    gap: space.sm,
  },
});
