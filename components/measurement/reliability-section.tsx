/**
 * The Data screen's reliability section: the reliability of each region's
 * contrast value across the brain table's sessions (when it has them), and
 * the trait reliabilities the study states for its participant-sheet
 * columns, each with its source (Owners and Analysts edit; everyone reads).
 * Both feed the attenuation note beside association results.
 */
import type { ColumnDef } from "@tanstack/react-table";
import { useMemo, useState } from "react";
import { StyleSheet, View } from "react-native";
import { ApiError } from "../../hooks/api";
import { useRoster } from "../../hooks/use-roster";
import {
  type TraitReliability,
  useBrainReliability,
  useSaveTraitReliabilities,
  useTraitReliabilities,
} from "../../hooks/use-reliability";
import { Choice } from "../choice";
import { formatCount } from "../charts/number-format";
import { DataTable } from "../tables/data-table";
import { palette, space } from "../theme";
import { Button, Card, Failure, Field, Heading, Notice, Pending, Txt } from "../ui";
import {
  type DraftProblems,
  type ReliabilityRow,
  type TraitDraft,
  checkTraitDrafts,
  problemsFromDetails,
  reliabilityRows,
} from "./reliability-rows";

export function ReliabilitySection(props: { studyId: string; canEdit: boolean }) {
  return (
    <View style={styles.root}>
      <BrainReliabilityCard studyId={props.studyId} />
      <TraitReliabilityCard studyId={props.studyId} canEdit={props.canEdit} />
    </View>
  );
}

function BrainReliabilityCard(props: { studyId: string }) {
  const query = useBrainReliability(props.studyId);
  const columns = useMemo<ColumnDef<ReliabilityRow, unknown>[]>(
    () => [
      // The ICC values and their intervals first, so a phone shows them without scrolling sideways.
      { accessorKey: "region", header: "Region", meta: { width: 128, narrowWidth: 72 } },
      {
        accessorKey: "icc31",
        header: "ICC(3,1)",
        meta: { numeric: true, decimals: 2, width: 88, narrowWidth: 60 },
      },
      {
        accessorKey: "icc31Interval",
        header: "95% CI",
        meta: {
          numeric: true,
          width: 150,
          narrowWidth: 62,
          wrap: true,
          label: "ICC(3,1) 95% confidence interval",
        },
        enableSorting: false,
      },
      {
        accessorKey: "icc21",
        header: "ICC(2,1)",
        meta: { numeric: true, decimals: 2, width: 88, narrowWidth: 60 },
      },
      {
        accessorKey: "icc21Interval",
        header: "95% CI",
        meta: {
          numeric: true,
          width: 150,
          narrowWidth: 62,
          wrap: true,
          label: "ICC(2,1) 95% confidence interval",
        },
        enableSorting: false,
      },
      {
        accessorKey: "n",
        header: "N",
        meta: { numeric: true, decimals: 0, width: 56, label: "participants with every session" },
      },
      {
        accessorKey: "sessions",
        header: "Sessions",
        meta: { numeric: true, decimals: 0, width: 84 },
      },
    ],
    [],
  );
  const rows = useMemo(
    () => (query.data?.available ? reliabilityRows(query.data.reliability.regions) : []),
    [query.data],
  );
  return (
    <Card testID="brain-reliability">
      <Heading level={2}>Reliability per region</Heading>
      {query.isPending ? (
        <Pending label="Comparing sessions…" />
      ) : query.isError ? (
        <Failure
          error={query.error}
          title="The reliability could not be computed"
          onRetry={() => query.refetch()}
        />
      ) : !query.data.available ? (
        <Notice testID="brain-reliability-unavailable">
          {query.data.reason} Reliability per region appears when the brain table has a session
          column with two or more sessions per participant.
        </Notice>
      ) : (
        <>
          <Txt kind="small" style={styles.muted}>
            {query.data.reliability.brainTable.fileName} (version{" "}
            {query.data.reliability.brainTable.version}) · sessions{" "}
            {query.data.reliability.sessions.join(", ")} ·{" "}
            {formatCount(query.data.reliability.participantsRetested)} participants with two or more
            sessions
          </Txt>
          <DataTable
            label="Reliability per region"
            data={rows}
            columns={columns}
            getRowId={(r) => r.region}
            initialPageSize={50}
            testID="brain-reliability-table"
          />
          {rows
            .filter((r) => r.problem !== null)
            .map((r) => (
              <Notice key={r.region} tone="caution">{`${r.region}: ${r.problem}`}</Notice>
            ))}
          <Txt kind="caption" style={styles.muted} testID="brain-reliability-method">
            {query.data.reliability.method}
          </Txt>
          <Txt kind="caption" style={styles.muted}>
            Task-imaging contrast values are often unreliable as individual measures; an observed
            brain–trait correlation can be no larger than √(rel_brain · rel_trait).
          </Txt>
        </>
      )}
    </Card>
  );
}

function TraitReliabilityCard(props: { studyId: string; canEdit: boolean }) {
  const traits = useTraitReliabilities(props.studyId);
  const roster = useRoster(props.studyId);
  const numericColumns = useMemo(
    () => (roster.data?.report.columns ?? []).filter((c) => c.type === "number").map((c) => c.name),
    [roster.data],
  );
  // Kept here, not in the form: a save refreshes the list, which mounts the form afresh
  // (and a mutation's per-call callbacks only reach the component that is still mounted).
  const save = useSaveTraitReliabilities(props.studyId);
  const [saved, setSaved] = useState(false);
  return (
    <Card testID="trait-reliabilities">
      <Heading level={2}>Trait reliabilities</Heading>
      <Txt kind="small" style={styles.muted}>
        State how reliable each trait of the participant sheet is, and where that value comes from.
        Association results then show the largest correlation the measures allow and the correlation
        corrected for unreliability.
      </Txt>
      {traits.isPending ? (
        <Pending />
      ) : traits.isError ? (
        <Failure
          error={traits.error}
          title="The trait reliabilities could not be loaded"
          onRetry={() => traits.refetch()}
        />
      ) : props.canEdit ? (
        roster.isPending ? (
          <Pending label="Reading the participant sheet…" />
        ) : numericColumns.length === 0 && traits.data.length === 0 ? (
          <Notice>
            Upload a participant sheet with numeric traits to state their reliabilities.
          </Notice>
        ) : (
          <>
            <TraitForm
              key={traits.data.map((t) => `${t.column}:${t.updatedAt}`).join("|")}
              save={save}
              saved={traits.data}
              numericColumns={numericColumns}
              onSaved={() => setSaved(true)}
              onEdit={() => setSaved(false)}
            />
            {saved ? (
              <Notice tone="success" testID="trait-saved">
                Saved. The change is recorded in the study's activity.
              </Notice>
            ) : null}
          </>
        )
      ) : traits.data.length === 0 ? (
        <Notice>No trait reliability has been stated yet. Owners and Analysts state them.</Notice>
      ) : (
        <SavedList saved={traits.data} />
      )}
    </Card>
  );
}

function SavedList(props: { saved: readonly TraitReliability[] }) {
  return (
    <View style={styles.list} testID="trait-reliability-list">
      {props.saved.map((t) => (
        <Txt key={t.column} kind="small">
          <Txt kind="label">{t.column}</Txt>: {t.reliability} — {t.source}
        </Txt>
      ))}
    </View>
  );
}

let nextKey = 0;
const newKey = () => {
  nextKey += 1;
  return `row-${nextKey}`;
};

function TraitForm(props: {
  save: ReturnType<typeof useSaveTraitReliabilities>;
  saved: readonly TraitReliability[];
  numericColumns: readonly string[];
  onSaved: () => void;
  onEdit: () => void;
}) {
  const save = props.save;
  const [drafts, setDrafts] = useState<TraitDraft[]>(() =>
    props.saved.map((t) => ({
      key: newKey(),
      column: t.column,
      reliability: String(t.reliability),
      source: t.source,
    })),
  );
  const [problems, setProblems] = useState<DraftProblems>({});
  const options = useMemo(() => {
    const names = [
      ...new Set([...props.numericColumns, ...drafts.map((d) => d.column).filter((c) => c !== "")]),
    ];
    return names.map((name) => ({ value: name, label: name }));
  }, [props.numericColumns, drafts]);

  const change = (key: string, patch: Partial<TraitDraft>) => {
    props.onEdit();
    setDrafts((list) => list.map((d) => (d.key === key ? { ...d, ...patch } : d)));
  };
  const submit = () => {
    const checked = checkTraitDrafts(drafts, props.numericColumns);
    setProblems(checked.problems);
    if (checked.entries === null) return;
    save.mutate(checked.entries, {
      onSuccess: () => props.onSaved(),
      onError: (e) => {
        if (e instanceof ApiError) setProblems(problemsFromDetails(drafts, e.details));
      },
    });
  };

  return (
    <View style={styles.form}>
      {drafts.length === 0 ? <Txt kind="small">No trait reliability stated yet.</Txt> : null}
      {drafts.map((d, i) => (
        <View key={d.key} style={styles.draft} testID={`trait-row-${i}`}>
          <Choice
            label="Trait"
            options={options}
            value={d.column === "" ? null : d.column}
            onChange={(column) => change(d.key, { column })}
          />
          {problems[d.key]?.column ? (
            <Txt kind="small" style={styles.error} accessibilityRole="alert">
              {problems[d.key]?.column}
            </Txt>
          ) : null}
          <Field
            label="Reliability (0 to 1)"
            value={d.reliability}
            onChangeText={(reliability) => change(d.key, { reliability })}
            keyboardType="decimal-pad"
            placeholder="0.82"
            error={problems[d.key]?.reliability ?? null}
            testID={`trait-reliability-${i}`}
          />
          <Field
            label="Source"
            value={d.source}
            onChangeText={(source) => change(d.key, { source })}
            placeholder="test–retest r = .82, manual of the scale"
            hint="Where the value comes from: the kind of reliability and the publication or manual."
            error={problems[d.key]?.source ?? null}
            testID={`trait-source-${i}`}
          />
          <Button
            label="Remove"
            variant="quiet"
            onPress={() => {
              props.onEdit();
              setDrafts((list) => list.filter((x) => x.key !== d.key));
            }}
            accessibilityLabel={`Remove ${d.column || "this trait"}`}
          />
        </View>
      ))}
      <View style={styles.actions}>
        <Button
          label="Add a trait"
          variant="secondary"
          onPress={() => {
            props.onEdit();
            setDrafts((list) => [
              ...list,
              { key: newKey(), column: "", reliability: "", source: "" },
            ]);
          }}
          testID="trait-add"
        />
        <Button
          label="Save trait reliabilities"
          onPress={submit}
          busy={save.isPending}
          testID="trait-save"
        />
      </View>
      {save.isError && !(save.error instanceof ApiError && Array.isArray(save.error.details)) ? (
        <Notice tone="danger">
          {save.error instanceof Error
            ? save.error.message
            : "The trait reliabilities could not be saved."}
        </Notice>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.lg },
  muted: { color: palette.muted },
  list: { gap: space.xs },
  form: { gap: space.md },
  draft: {
    gap: space.sm,
    paddingBottom: space.md,
    borderBottomWidth: 1,
    borderBottomColor: palette.line,
  },
  actions: { flexDirection: "row", flexWrap: "wrap", gap: space.sm },
  error: { color: palette.danger },
});
