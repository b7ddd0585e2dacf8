/**
 * The top of a fit, in plain words and within the first screen: the
 * model's name and stage, its question, N over the regions, **Set aside: k**
 * with a disclosure of each set-aside (participant, scope, reason, who and
 * when) and what the model's exclusion rules left out, the earlier fit it
 * re-runs with what changed, a notice with a Refit button when newer data
 * or set-asides exist, a Run again button when
 * the fit was cancelled or failed, and the small-sample caution when a
 * region has fewer than 20 participants.
 */
import { useState } from "react";
import { Pressable, StyleSheet, View } from "react-native";
import { useRouter } from "expo-router";
import { Badge, Button, Notice, Txt } from "../ui";
import { fonts, palette, space, type } from "../theme";
import { disclosureStyles } from "./disclosure-styles";
import { methodOf, questionOf, regionsOf } from "./describe-model";
import {
  nWords,
  refitOfWords,
  setAsideByline,
  setAsideCountWords,
  setAsideTitle,
  stageTone,
  whenWords,
} from "./lineage-words";
import { CollapsedCaution } from "./collapsed-caution";
import { RuleExclusions } from "./rule-exclusions";
import { smallSampleCaution } from "../../contract/cautions";
import { planVerdict } from "../../contract/plans";
import type { ModelSpec, RegionResult } from "../../contract/spec";
import { type FitView, useRunFit } from "../../hooks/use-fits";
import { mutateThen } from "../../hooks/mutate-then";

export function FitHeader({
  fit,
  spec,
  regions,
  canRun,
}: {
  fit: FitView;
  spec: ModelSpec | null;
  regions: readonly RegionResult[];
  canRun: boolean;
}) {
  const n = nWords(fit.n);
  const plain = [
    // A prediction is one model over every chosen region: its N is the participants complete in all of them.
    ...(n ? [spec?.kind === "prediction" ? `${n} in the model` : `${n} per region`] : []),
    ...(spec ? [regionsOf(spec, regions.length || undefined), methodOf(spec)] : []),
  ];
  return (
    <View style={styles.root}>
      <View style={styles.head}>
        <Txt kind="title" style={{ flexShrink: 1 }}>
          {fit.model.name}
        </Txt>
        <View testID="fit-stage">
          <Badge label={fit.stage} tone={stageTone[fit.stage]} />
        </View>
      </View>
      {spec ? <Txt>{questionOf(spec)}</Txt> : null}
      {plain.length > 0 ? (
        <Txt kind="small" style={{ color: palette.inkSoft }} testID="fit-plain-words">
          {plain.join(" · ")}
        </Txt>
      ) : null}
      <SetAsideDisclosure fit={fit} />
      <RuleExclusions rules={fit.ruleExclusions ?? []} />
      {fit.plan ? <PlanVerdict plan={fit.plan} /> : null}
      {fit.refitOf ? <RefitOf fit={fit} /> : null}
      {fit.stale ? <StaleNotice fit={fit} canRun={canRun && !ended(fit)} /> : null}
      {ended(fit) && canRun && !fit.model.deleted ? <RunAgain fit={fit} /> : null}
      {fit.status === "done" ? <SmallSample regions={regions} /> : null}
      <Txt kind="caption">
        Brain table v{fit.datasets.brain.version} ({fit.datasets.brain.fileName},{" "}
        {fit.datasets.brain.sha256.slice(0, 10)})
        {fit.datasets.participants
          ? ` · participant sheet v${fit.datasets.participants.version} (${fit.datasets.participants.fileName})`
          : ""}{" "}
        · run by {fit.createdBy.name ?? "a member"}, {whenWords(fit.createdAt)}
      </Txt>
    </View>
  );
}

/** "Set aside: k" with each set-aside behind a disclosure (collapsed at first). */
function SetAsideDisclosure({ fit }: { fit: FitView }) {
  const [open, setOpen] = useState(false);
  const count = fit.setAsides.length;
  if (count === 0) {
    return (
      <Txt kind="small" testID="fit-set-aside-count">
        {setAsideCountWords(0)} · every participant with data was used
      </Txt>
    );
  }
  return (
    <View>
      <Pressable
        accessibilityRole="button"
        accessibilityState={{ expanded: open }}
        accessibilityLabel={`${setAsideCountWords(count)}. ${open ? "Hide" : "Show"} who was set aside and why`}
        onPress={() => setOpen(!open)}
        style={({ pressed }) => [styles.disclosure, pressed && styles.pressed]}
        testID="fit-set-aside-toggle"
      >
        <Txt kind="small" style={styles.disclosureText} testID="fit-set-aside-count">
          {setAsideCountWords(count)}
        </Txt>
        <Txt kind="small" style={styles.disclosureHint}>
          {open ? "Hide ▴" : "Who and why ▾"}
        </Txt>
      </Pressable>
      {open ? (
        <View style={styles.list} testID="fit-set-aside-list">
          {fit.setAsides.map((s, i) => (
            <View
              key={`${s.participant ?? i}-${s.region ?? ""}`}
              style={styles.item}
              testID="fit-set-aside-item"
            >
              <Txt kind="small" style={styles.itemTitle}>
                {setAsideTitle(s)}
              </Txt>
              <Txt kind="small">“{s.reason}”</Txt>
              <Txt kind="caption" style={{ color: palette.muted }}>
                {setAsideByline(s)}
              </Txt>
            </View>
          ))}
          {!fit.participantsVisible ? (
            <Txt kind="caption" style={{ color: palette.muted }}>
              This study keeps participant ids to its Owners, Analysts and Reviewers.
            </Txt>
          ) : null}
        </View>
      ) : null}
    </View>
  );
}

/** "As planned" or "Deviates from the plan (3)" with each deviation behind a disclosure. */
function PlanVerdict({ plan }: { plan: NonNullable<FitView["plan"]> }) {
  const [open, setOpen] = useState(false);
  const verdict = planVerdict(plan);
  const which = `plan of ${whenWords(plan.registeredAt)}, SHA-256 ${plan.sha256.slice(0, 12)}…`;
  if (plan.asPlanned)
    return (
      <View style={styles.planRow} testID="fit-plan">
        <Badge label={verdict} tone="success" />
        <Txt kind="caption" style={{ color: palette.muted }}>
          {plan.model ? `“${plan.model}” of the ${which}` : which}
        </Txt>
      </View>
    );
  return (
    <View testID="fit-plan">
      <Pressable
        accessibilityRole="button"
        accessibilityState={{ expanded: open }}
        accessibilityLabel={`${verdict}. ${open ? "Hide" : "Show"} how`}
        onPress={() => setOpen(!open)}
        style={({ pressed }) => [styles.disclosure, pressed && styles.pressed]}
        testID="fit-plan-toggle"
      >
        <Badge label={verdict} tone="danger" />
        <Txt kind="small" style={styles.disclosureHint}>
          {open ? "Hide ▴" : "How ▾"}
        </Txt>
      </Pressable>
      {open ? (
        <View style={styles.list} testID="fit-plan-deviations">
          {plan.deviations.map((d) => (
            <Txt key={d} kind="small">
              • {d}
            </Txt>
          ))}
          <Txt kind="caption" style={{ color: palette.muted }}>
            Compared with {plan.model ? `“${plan.model}” of the ${which}` : `the ${which}`}
          </Txt>
        </View>
      ) : null}
    </View>
  );
}

/** "Refit of ⟨earlier fit⟩" (a link to it) with what changed. */
function RefitOf({ fit }: { fit: FitView }) {
  const router = useRouter();
  const refitOf = fit.refitOf as string;
  return (
    <View style={styles.refit} testID="fit-refit-of">
      <Pressable
        accessibilityRole="link"
        onPress={() => router.push(`/studies/${fit.studyId}/fits/${refitOf}`)}
        style={({ pressed }) => [styles.link, pressed && styles.pressed]}
      >
        <Txt kind="small" style={styles.linkText}>
          {refitOfWords(fit.model.name, refitOf, fit.refitOfCreatedAt)}
        </Txt>
      </Pressable>
      <Txt kind="small" style={{ color: palette.inkSoft }}>
        {fit.changes.length > 0
          ? `Changed: ${fit.changes.join("; ")}.`
          : "Nothing changed in the data, set-asides or model."}
      </Txt>
    </View>
  );
}

/** The notice that newer data or set-asides exist, with a Refit button for those who may run fits. */
function StaleNotice({ fit, canRun }: { fit: FitView; canRun: boolean }) {
  const router = useRouter();
  const run = useRunFit(fit.studyId);
  const mayRefit = canRun && !fit.model.deleted;
  return (
    <View style={styles.stale} testID="fit-stale">
      <Notice tone="caution" title="Newer data or set-asides exist">
        {fit.staleReasons.join(". ")}. This fit stays as it was run
        {mayRefit ? "; a refit runs the model on what the study has now." : "."}
      </Notice>
      {run.error ? <Notice tone="danger">{run.error.message}</Notice> : null}
      {mayRefit ? (
        <Button
          label="Refit"
          testID="fit-refit"
          busy={run.isPending}
          onPress={() =>
            mutateThen(run, fit.model.id, (created) =>
              router.push(`/studies/${fit.studyId}/fits/${created.id}`),
            )
          }
          style={styles.refitButton}
        />
      ) : null}
    </View>
  );
}

/** A fit that stopped without results: cancelled or failed. */
const ended = (fit: FitView) => fit.status === "cancelled" || fit.status === "failed";

/** Starts a new fit of the same model (on what the study has now) and opens it. */
function RunAgain({ fit }: { fit: FitView }) {
  const router = useRouter();
  const run = useRunFit(fit.studyId);
  return (
    <View style={styles.stale}>
      {run.error ? <Notice tone="danger">{run.error.message}</Notice> : null}
      <Button
        label="Run again"
        testID="fit-run-again"
        busy={run.isPending}
        onPress={() =>
          mutateThen(run, fit.model.id, (created) =>
            router.push(`/studies/${fit.studyId}/fits/${created.id}`),
          )
        }
        style={styles.refitButton}
      />
    </View>
  );
}

/** The small-sample caution on one line, with "more" for the rest. */
function SmallSample({ regions }: { regions: readonly RegionResult[] }) {
  const caution = smallSampleCaution(regions);
  if (!caution) return null;
  return (
    <CollapsedCaution
      title={caution.title}
      text={caution.text}
      name="small-sample caution"
      testID="fit-small-sample"
    />
  );
}

/** The caution of a model whose regions were chosen from the same data, on one line with "more". */
export function CircularityCaution({ text }: { text: string }) {
  return (
    <CollapsedCaution
      title="Circular region selection"
      text={text}
      name="caution on region selection"
      testID="fit-circularity"
    />
  );
}

const styles = {
  ...disclosureStyles,
  ...StyleSheet.create({
    root: { gap: space.sm },
    head: {
      flexDirection: "row",
      justifyContent: "space-between",
      alignItems: "center",
      gap: space.sm,
    },
    disclosureText: { fontFamily: fonts.semibold },
    disclosureHint: { color: palette.focus },
    refit: { gap: 2 },
    planRow: { flexDirection: "row", alignItems: "center", flexWrap: "wrap", gap: space.sm },
    link: { minHeight: 44, justifyContent: "center", alignSelf: "flex-start" },
    linkText: { color: palette.focus, textDecorationLine: "underline", fontSize: type.small },
    stale: { gap: space.sm },
    refitButton: { alignSelf: "flex-start" },
  }),
};
