/**
 * Planner: how many participants the next study needs, from the expected
 * effect and the reliability of the measures; optionally checked by
 * simulation from three variance components.
 */
import { useState } from "react";
import { StyleSheet, View } from "react-native";
import { Choice } from "./choice";
import { PowerCurve } from "./charts/power-curve";
import { PowerCurveDownloads } from "./planner/power-curve-downloads";
import { Button, Card, Field, Heading, Notice, Txt } from "./ui";
import { palette, space } from "./theme";
import { usePlanner, type PlannerAnswer, type PlannerQuestionInput } from "../hooks/use-planner";
import { plannerQuestionSchema, simulationLimitText } from "../contract/planner";

type Design = "correlation" | "two-group" | "one-sample";

const designOptions = [
  { value: "correlation", label: "Brain–trait correlation" },
  { value: "two-group", label: "Two groups" },
  { value: "one-sample", label: "Effect across the group" },
] as const;

const modeOptions = [
  { value: "formula", label: "Formula" },
  { value: "simulation", label: "Formula + simulation" },
] as const;

function num(text: string): number | undefined {
  const trimmed = text.trim();
  if (trimmed === "") return undefined;
  const value = Number(trimmed);
  return Number.isFinite(value) ? value : Number.NaN;
}

export function PlannerScreen() {
  const [design, setDesign] = useState<Design>("correlation");
  const [effect, setEffect] = useState("0.3");
  const [alpha, setAlpha] = useState("0.05");
  const [power, setPower] = useState("0.8");
  const [relBrain, setRelBrain] = useState("0.4");
  const [relTrait, setRelTrait] = useState("0.8");
  const [ratio, setRatio] = useState("1");
  const [mode, setMode] = useState<"formula" | "simulation">("formula");
  const [noise, setNoise] = useState("4");
  const [taskDesign, setTaskDesign] = useState("0.5");
  const [trueDiff, setTrueDiff] = useState("1");
  const [trials, setTrials] = useState("40");
  const [problem, setProblem] = useState<string | null>(null);
  const planner = usePlanner();

  const submit = () => {
    const question: PlannerQuestionInput = {
      design,
      effect: num(effect) ?? Number.NaN,
      alpha: num(alpha),
      power: num(power),
      reliabilityBrain: mode === "simulation" ? undefined : num(relBrain),
      reliabilityTrait: design === "correlation" ? num(relTrait) : undefined,
      groupRatio: design === "two-group" ? num(ratio) : undefined,
      mode,
      components:
        mode === "simulation"
          ? {
              measurementNoise: num(noise) ?? Number.NaN,
              taskDesign: num(taskDesign) ?? Number.NaN,
              trueDifferences: num(trueDiff) ?? Number.NaN,
            }
          : undefined,
      trials: mode === "simulation" ? num(trials) : undefined,
    };
    const checked = plannerQuestionSchema.safeParse(question);
    if (!checked.success) {
      const issue = checked.error.issues[0];
      setProblem(`${issue.path.join(".") || "question"}: ${issue.message}`);
      return;
    }
    setProblem(null);
    planner.mutate(question);
  };

  return (
    <View style={styles.root}>
      <Heading>Planner</Heading>
      <Txt style={{ color: palette.muted }}>
        How many participants does the next study need? Unreliable measures shrink the correlation
        you can observe, so reliability belongs in every plan.
      </Txt>
      <View style={styles.columns}>
        <Card style={styles.form}>
          <Choice
            label="Question"
            options={designOptions}
            value={design}
            onChange={setDesign}
            testID="planner-design"
          />
          <Field
            label={
              design === "correlation"
                ? "Expected true correlation r"
                : "Expected standardised difference d"
            }
            value={effect}
            onChangeText={setEffect}
            inputMode="decimal"
            testID="planner-effect"
          />
          <View style={styles.pair}>
            <View style={styles.half}>
              <Field
                label="Significance level (two-sided)"
                value={alpha}
                onChangeText={setAlpha}
                inputMode="decimal"
              />
            </View>
            <View style={styles.half}>
              <Field
                label="Target power"
                value={power}
                onChangeText={setPower}
                inputMode="decimal"
              />
            </View>
          </View>
          {design === "two-group" ? (
            <Field
              label="Second group size ÷ first"
              value={ratio}
              onChangeText={setRatio}
              inputMode="decimal"
            />
          ) : null}
          <Choice label="Method" options={modeOptions} value={mode} onChange={setMode} />
          {mode === "formula" ? (
            <View style={styles.pair}>
              <View style={styles.half}>
                <Field
                  label="Reliability of the brain measure"
                  value={relBrain}
                  onChangeText={setRelBrain}
                  inputMode="decimal"
                  hint="test–retest ICC; blank = perfect"
                />
              </View>
              {design === "correlation" ? (
                <View style={styles.half}>
                  <Field
                    label="Reliability of the trait"
                    value={relTrait}
                    onChangeText={setRelTrait}
                    inputMode="decimal"
                    hint="blank = perfect"
                  />
                </View>
              ) : null}
            </View>
          ) : (
            <>
              <Txt kind="small" style={{ color: palette.muted }}>
                Variances of one participant's value: noise of a single trial, what the task design
                adds per session, and true differences between people (the effect's unit).
              </Txt>
              <View style={styles.pair}>
                <View style={styles.half}>
                  <Field
                    label="Trial noise variance"
                    value={noise}
                    onChangeText={setNoise}
                    inputMode="decimal"
                  />
                </View>
                <View style={styles.half}>
                  <Field
                    label="Trials per session"
                    value={trials}
                    onChangeText={setTrials}
                    inputMode="numeric"
                  />
                </View>
              </View>
              <View style={styles.pair}>
                <View style={styles.half}>
                  <Field
                    label="Task-design variance"
                    value={taskDesign}
                    onChangeText={setTaskDesign}
                    inputMode="decimal"
                  />
                </View>
                <View style={styles.half}>
                  <Field
                    label="True-difference variance"
                    value={trueDiff}
                    onChangeText={setTrueDiff}
                    inputMode="decimal"
                  />
                </View>
              </View>
              <Txt kind="caption" style={{ color: palette.muted }}>
                {simulationLimitText}
              </Txt>
            </>
          )}
          {problem ? <Notice tone="danger">{problem}</Notice> : null}
          {planner.error ? <Notice tone="danger">{planner.error.message}</Notice> : null}
          <Button label="Plan the study" onPress={submit} busy={planner.isPending} testID="plan" />
        </Card>
        <View style={styles.answer}>
          {planner.data && planner.variables ? (
            <Answer answer={planner.data} question={planner.variables} />
          ) : null}
        </View>
      </View>
    </View>
  );
}

function Answer({
  answer,
  question,
}: {
  answer: PlannerAnswer;
  /** The question this answer is to (the figure downloads ask it again), not the form as edited since. */
  question: PlannerQuestionInput;
}) {
  const { design } = question;
  const power = plannerQuestionSchema.parse(question).power;
  const effectName = design === "correlation" ? "r" : "d";
  const sentence =
    design === "two-group" && answer.nPerGroup
      ? `You need ${answer.nPerGroup[0]} + ${answer.nPerGroup[1]} = ${answer.n} participants`
      : `You need ${answer.n} participants`;
  return (
    <Card testID="planner-answer">
      <Txt kind="title" accessibilityRole="header">
        {sentence} for {Math.round(power * 100)}% power.
      </Txt>
      <Txt kind="small" style={{ color: palette.inkSoft }}>
        The observable effect through these measures is {effectName} ={" "}
        {answer.observableEffect.toFixed(3)}.
      </Txt>
      {answer.simulation ? (
        <Txt kind="small" style={{ color: palette.inkSoft }}>
          Simulation (reliability {answer.simulation.reliability.toFixed(2)}):{" "}
          {answer.simulation.n === null
            ? "no simulated size reached the target power."
            : `${answer.simulation.n} participants reached the target.`}{" "}
          {answer.simulation.points
            .map((p) => `n = ${p.n}: ${(p.power * 100).toFixed(1)}% ± ${(p.se * 100).toFixed(1)}`)
            .join("; ")}
          .
        </Txt>
      ) : null}
      <PowerCurve
        points={answer.curve}
        targetPower={power}
        answerN={answer.n}
        nLabel="Participants (total)"
        testID="power-curve"
      />
      <PowerCurveDownloads question={question} />
      <Txt kind="caption">Method: {answer.method}.</Txt>
    </Card>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.lg },
  columns: { flexDirection: "row", flexWrap: "wrap", gap: space.lg, alignItems: "flex-start" },
  form: { flexGrow: 1, flexBasis: 340, maxWidth: 560 },
  answer: { flexGrow: 1, flexBasis: 340 },
  pair: { flexDirection: "row", flexWrap: "wrap", gap: space.md },
  half: { flexGrow: 1, flexBasis: 140 },
});
