/**
 * The study's analysis plan, on the Models screen: everyone reads the
 * current plan (title, planned models with the expected direction, the
 * correction, the exclusion rules, the missing-value rule, who registered
 * it and when, its SHA-256, whether data had been seen, the
 * countersignature, the plan it replaces); a Reviewer countersigns; an
 * Owner or Analyst registers a plan from the study's saved models, or a
 * new version with the reason. The rule and verdict words are
 * contract/plans.ts.
 */
import { useState } from "react";
import { StyleSheet, View } from "react-native";
import { Choice } from "./choice";
import { Badge, Button, Card, Failure, Field, Notice, Pending, Txt } from "./ui";
import { palette, space } from "./theme";
import { whenWords } from "./fit/lineage-words";
import { correctionLabels } from "../contract/labels";
import { directions, type Direction } from "../contract/plans";
import {
  criterionText,
  type ExclusionRule,
  type MissingRule,
  ruleOps,
  type RuleOp,
} from "../contract/exclusion-rules";
import { corrections } from "../contract/spec";
import { can, useStudy } from "../hooks/use-study";
import { useModels } from "../hooks/use-models";
import { type PlanView, useCountersignPlan, usePlans, useRegisterPlan } from "../hooks/use-plans";

const directionLabels: Record<Direction, string> = {
  positive: "Positive",
  negative: "Negative",
  either: "Either way",
};
const missingLabels: Record<MissingRule, string> = {
  keep: "Keep participants with a missing value",
  "set-aside": "Set aside participants with a missing value",
};

export function PlanCard({ studyId }: { studyId: string }) {
  const study = useStudy(studyId);
  const plans = usePlans(studyId);
  const [writing, setWriting] = useState(false);
  const mayRegister = can(study.data, "plans.register");
  const current = plans.data?.[0] ?? null;
  return (
    <Card testID="plan-card" style={styles.card}>
      <Txt kind="title">Analysis plan</Txt>
      {plans.isPending ? (
        <Pending />
      ) : plans.isError ? (
        <Failure error={plans.error} onRetry={() => plans.refetch()} />
      ) : current ? (
        <PlanBody
          plan={current}
          earlier={plans.data.length - 1}
          mayCountersign={can(study.data, "plans.countersign")}
        />
      ) : (
        <Txt style={{ color: palette.muted }}>
          No plan yet. A plan states, before the data are seen, which models will be fitted, the
          direction each effect is expected to take, the correction, and who is set aside and why.
        </Txt>
      )}
      {mayRegister && !writing ? (
        <Button
          label={current ? "Register a new version" : "Register a plan"}
          variant="secondary"
          onPress={() => setWriting(true)}
          testID="plan-new"
        />
      ) : null}
      {mayRegister && writing ? (
        <PlanForm studyId={studyId} replaces={current} onDone={() => setWriting(false)} />
      ) : null}
    </Card>
  );
}

function PlanBody({
  plan,
  earlier,
  mayCountersign,
}: {
  plan: PlanView;
  earlier: number;
  mayCountersign: boolean;
}) {
  const sign = useCountersignPlan(plan.studyId);
  const p = plan.plan;
  return (
    <View style={styles.body} testID="plan-current">
      <Txt kind="lead">{p.title}</Txt>
      <Txt kind="caption" style={{ color: palette.muted }} testID="plan-registered">
        Registered by {plan.registeredBy.name ?? "a member"}, {whenWords(plan.registeredAt)} ·
        SHA-256 {plan.sha256.slice(0, 12)}… ·{" "}
        {plan.dataSeen ? "data had already been confirmed" : "before any data were confirmed"}
      </Txt>
      {plan.replaces ? (
        <Txt kind="small">
          Replaces an earlier version{plan.replaceReason ? `: “${plan.replaceReason}”` : ""}
          {earlier > 1 ? ` (${earlier} earlier versions)` : ""}
        </Txt>
      ) : null}
      <Txt kind="label">Models</Txt>
      {p.models.map((m) => (
        <Txt key={m.name} kind="small">
          • {m.name} — expected direction: {directionLabels[m.direction].toLowerCase()}
        </Txt>
      ))}
      <Txt kind="small">Correction: {correctionLabels[p.correction]}</Txt>
      <Txt kind="label">Exclusion rules</Txt>
      {p.exclusionRules.length === 0 ? (
        <Txt kind="small">None</Txt>
      ) : (
        p.exclusionRules.map((r) => (
          <Txt key={`${criterionText(r)}-${r.reason}`} kind="small" testID="plan-rule">
            • {criterionText(r)} — {r.reason}
          </Txt>
        ))
      )}
      <Txt kind="small">{missingLabels[p.missing]}</Txt>
      {plan.countersignedBy ? (
        <Badge
          label={`Countersigned by ${plan.countersignedBy.name ?? "a member"}, ${whenWords(plan.countersignedAt as string)}`}
          tone="success"
        />
      ) : mayCountersign ? (
        <View style={styles.row}>
          {sign.error ? <Notice tone="danger">{sign.error.message}</Notice> : null}
          <Button
            label="Countersign"
            variant="secondary"
            busy={sign.isPending}
            onPress={() => sign.mutate(plan.id)}
            testID="plan-countersign"
          />
        </View>
      ) : (
        <Txt kind="caption" style={{ color: palette.muted }}>
          Not countersigned yet
        </Txt>
      )}
    </View>
  );
}

interface RuleDraft {
  column: string;
  op: RuleOp;
  value: string;
  reason: string;
}

/** A number when the text reads as one, otherwise the text (a rule on a category). */
function ruleValue(text: string): number | string {
  const t = text.trim();
  const n = Number(t);
  return t !== "" && Number.isFinite(n) ? n : t;
}

function PlanForm({
  studyId,
  replaces,
  onDone,
}: {
  studyId: string;
  replaces: PlanView | null;
  onDone: () => void;
}) {
  const models = useModels(studyId);
  const register = useRegisterPlan(studyId);
  const [title, setTitle] = useState(replaces?.plan.title ?? "");
  const [chosen, setChosen] = useState<Record<string, Direction>>({});
  const [correction, setCorrection] = useState<(typeof corrections)[number]>(
    replaces?.plan.correction ?? "none",
  );
  const [rules, setRules] = useState<RuleDraft[]>(
    (replaces?.plan.exclusionRules ?? []).map((r: ExclusionRule) => ({
      ...r,
      value: String(r.value),
    })),
  );
  const [missing, setMissing] = useState<MissingRule>(replaces?.plan.missing ?? "keep");
  const [reason, setReason] = useState("");
  const setRule = (i: number, patch: Partial<RuleDraft>) =>
    setRules(rules.map((r, k) => (k === i ? { ...r, ...patch } : r)));
  const submit = () => {
    const planned = (models.data ?? [])
      .filter((m) => chosen[m.id] !== undefined)
      .map((m) => ({
        name: m.name,
        spec: m.spec,
        regionSelection: m.regionSelection,
        direction: chosen[m.id],
      }));
    register.mutate(
      {
        plan: {
          title,
          models: planned,
          correction,
          exclusionRules: rules.map((r) => ({ ...r, value: ruleValue(r.value) })),
          missing,
        },
        ...(replaces ? { replaces: replaces.id, reason } : {}),
      },
      { onSuccess: onDone },
    );
  };
  return (
    <View style={styles.body} testID="plan-form">
      <Notice tone="info">
        A registered plan cannot be changed: a later version is a new plan that names this one and
        says why.
      </Notice>
      <Field label="Title" value={title} onChangeText={setTitle} testID="plan-title" />
      <Txt kind="label">
        Models the plan will fit, and the direction each effect is expected to take
      </Txt>
      {models.isPending ? <Pending /> : null}
      {(models.data ?? []).map((m) => (
        <Choice<Direction | "no">
          key={m.id}
          label={m.name}
          options={[
            { value: "no", label: "Not planned" },
            ...directions.map((d) => ({ value: d, label: directionLabels[d] })),
          ]}
          value={chosen[m.id] ?? "no"}
          onChange={(v) => {
            const next = { ...chosen };
            if (v === "no") delete next[m.id];
            else next[m.id] = v;
            setChosen(next);
          }}
          testID={`plan-model-${m.name}`}
        />
      ))}
      <Choice
        label="Correction"
        options={corrections.map((c) => ({ value: c, label: correctionLabels[c] }))}
        value={correction}
        onChange={setCorrection}
        testID="plan-correction"
      />
      <Txt kind="label">Exclusion rules (columns of the participant sheet)</Txt>
      {rules.map((r, i) => (
        // biome-ignore lint/suspicious/noArrayIndexKey: rows being edited have no other identity
        <View key={i} style={styles.rule} testID="plan-rule-row">
          <Field label="Column" value={r.column} onChangeText={(v) => setRule(i, { column: v })} />
          <Choice<RuleOp>
            label="Is"
            options={ruleOps.map((op) => ({ value: op, label: op }))}
            value={r.op}
            onChange={(op) => setRule(i, { op })}
          />
          <Field label="Value" value={r.value} onChangeText={(v) => setRule(i, { value: v })} />
          <Field label="Reason" value={r.reason} onChangeText={(v) => setRule(i, { reason: v })} />
          <Button
            label="Remove rule"
            variant="quiet"
            onPress={() => setRules(rules.filter((_, k) => k !== i))}
          />
        </View>
      ))}
      <Button
        label="Add a rule"
        variant="secondary"
        onPress={() => setRules([...rules, { column: "", op: ">", value: "", reason: "" }])}
        testID="plan-add-rule"
      />
      <Choice<MissingRule>
        label="Missing values on a rule's column"
        options={(["keep", "set-aside"] as const).map((v) => ({
          value: v,
          label: missingLabels[v],
        }))}
        value={missing}
        onChange={setMissing}
        testID="plan-missing"
      />
      {replaces ? (
        <Field
          label="Why a new version"
          value={reason}
          onChangeText={setReason}
          testID="plan-reason"
        />
      ) : null}
      {register.error ? <Notice tone="danger">{register.error.message}</Notice> : null}
      <View style={styles.row}>
        <Button label="Register" busy={register.isPending} onPress={submit} testID="plan-submit" />
        <Button label="Cancel" variant="quiet" onPress={onDone} />
      </View>
    </View>
  );
}

const styles = StyleSheet.create({
  card: { gap: space.sm },
  body: { gap: space.xs },
  row: { flexDirection: "row", flexWrap: "wrap", gap: space.sm, alignItems: "center" },
  rule: {
    gap: space.xs,
    paddingLeft: space.sm,
    borderLeftWidth: 2,
    borderLeftColor: palette.line,
  },
});
