/**
 * The preview of an upload, before anything is stored: what was read (kind,
 * delimiter, rows, columns, participants, id column, layout, regions,
 * sessions), the columns that may hold direct identifiers with the required
 * choice for each (drop it, or keep it with a written reason), the
 * brain-table columns that would be left out with the required choice for
 * each (leave it out, or use it as a region), the problems still open, each column's detected type with a control to change it, and
 * the first rows as written. Confirm stores the version; Cancel leaves
 * nothing stored.
 */
import type { ColumnDef } from "@tanstack/react-table";
import { useMemo, useState } from "react";
import { Pressable, StyleSheet, Text, View } from "react-native";
import {
  type ColumnPreview,
  type DatasetPreview,
  type DatasetVersion,
  useConfirmDataset,
} from "../../hooks/use-datasets";
import { formatValue } from "../charts/number-format";
import { Choice } from "../choice";
import { DataTable } from "../tables/data-table";
import { fonts, palette, radius, space, type } from "../theme";
import { Badge, Button, Card, Field, Heading, Notice, Txt } from "../ui";
import { formatBytes, kindLabel, plural } from "./dataset-format";
import { FileRowsTable } from "./file-rows-table";
import { ProblemList } from "./problem-list";
import { withTextCells } from "./text-cells";
import {
  type Decisions,
  type IdentifierDecision,
  type TypeChoice,
  chosenType,
  LEFT_OUT,
  confirmInput,
  leftOutColumns,
  noDecisions,
  openProblems,
  typeChoices,
  undecidedIdentifiers,
  undecidedLeftOut,
} from "./upload-decisions";
import { mutateThen } from "../../hooks/mutate-then";

const roleWords: Record<string, string> = {
  id: "participant id",
  session: "session",
  region: "region",
  se: "standard error",
  "region-name": "region name",
  value: "value",
  ignored: "not used",
  dropped: "dropped",
  variable: "variable",
};

const identifierOptions = [
  { value: "drop", label: "Drop it", hint: "the column is never stored" },
  { value: "keep", label: "Keep it", hint: "with a written reason, logged" },
] as const;

const leaveOutOption = {
  value: "leave",
  label: "Leave it out",
  hint: "the column is not stored; the version records it as dropped",
} as const;
const regionOption = {
  value: "region",
  label: "Use it as a region",
  hint: "each cell must then be a number or a missing marker",
} as const;

export function UploadPreview(props: {
  studyId: string;
  preview: DatasetPreview;
  onConfirmed: (version: DatasetVersion) => void;
  onCancel: () => void;
}) {
  const { preview } = props;
  const [decisions, setDecisions] = useState<Decisions>(noDecisions);
  const confirm = useConfirmDataset(props.studyId);
  const undecided = [
    ...undecidedIdentifiers(preview, decisions),
    ...undecidedLeftOut(preview, decisions),
  ];
  const leftOut = leftOutColumns(preview);
  const open = openProblems(preview, decisions);
  // Columns that would be left out have their own section above the other problems.
  const listed = open.filter((p) => p.code !== LEFT_OUT);
  const hiddenProblems = Math.max(0, preview.problemCount - preview.problems.length);

  const setType = (column: string, chosen: TypeChoice) =>
    setDecisions((d) => ({ ...d, types: { ...d.types, [column]: chosen } }));
  const setIdentifier = (column: string, decision: IdentifierDecision) =>
    setDecisions((d) => ({ ...d, identifiers: { ...d.identifiers, [column]: decision } }));
  const setLeftOut = (column: string, choice: "leave" | "region") =>
    setDecisions((d) => {
      const types = { ...d.types };
      if (choice === "region") types[column] = "number";
      else delete types[column];
      return { ...d, types, leaveOut: { ...d.leaveOut, [column]: choice === "leave" } };
    });

  const fileColumns = useMemo(
    () => preview.columns.map((c) => ({ name: c.name, numeric: false })),
    [preview.columns],
  );
  const idIndex = Math.max(
    0,
    preview.columns.findIndex((c) => c.role === "id"),
  );
  const cellRows = useMemo(
    () => preview.rows.map((r) => ({ row: r.row, cells: r.cells })),
    [preview.rows],
  );

  return (
    <Card testID="upload-preview">
      <View style={styles.head}>
        <Heading level={2} style={styles.shrink}>
          Preview of {preview.fileName}
        </Heading>
        <Badge label="Not stored yet" tone="accent" />
      </View>
      <Txt kind="small" testID="preview-summary">
        {kindLabel[preview.kind]} · {preview.delimiterName}-separated ·{" "}
        {plural(preview.rowCount, "row")} · {plural(preview.columnCount, "column")} ·{" "}
        {plural(preview.participants, "participant")} · {formatBytes(preview.byteSize)}
      </Txt>
      <Txt kind="small">
        Participant id column: <Txt kind="mono">{preview.idColumn}</Txt>
        {preview.idColumnGuessed
          ? " (guessed: no column was named as expected; set the id column and upload again if this is wrong)"
          : ""}
      </Txt>
      {preview.kind === "brain" ? (
        <Txt kind="small">
          Layout: {preview.layout ?? "wide"} · {plural(preview.regions?.length ?? 0, "region")}
          {preview.sessions && preview.sessions.length > 0
            ? ` · sessions ${preview.sessions.join(", ")}`
            : " · no session column"}
        </Txt>
      ) : null}

      {preview.identifierColumns.length > 0 ? (
        <View style={styles.section} testID="identifier-columns">
          <Heading level={3}>Columns that may hold direct identifiers</Heading>
          <Notice tone="caution">
            Covarion needs no names, birth dates, addresses, phone numbers, e-mail addresses or
            record numbers. Drop each column below (it is never stored), or keep it and write why;
            the reason is logged.
          </Notice>
          {preview.identifierColumns.map((flag) => {
            const current = decisions.identifiers[flag.column];
            return (
              <View key={flag.column} style={styles.identifier} testID="identifier-column">
                <Txt kind="small">
                  <Txt kind="mono">{flag.column}</Txt>: {flag.reason}.
                </Txt>
                <Choice
                  label={`What to do with ${flag.column}`}
                  options={identifierOptions}
                  value={current?.decision ?? null}
                  onChange={(decision) =>
                    setIdentifier(flag.column, { decision, reason: current?.reason ?? "" })
                  }
                />
                {current?.decision === "keep" ? (
                  <Field
                    label={`Why ${flag.column} is kept`}
                    value={current.reason}
                    onChangeText={(reason) =>
                      setIdentifier(flag.column, { decision: "keep", reason })
                    }
                    placeholder="e.g. pseudonymous codes issued by the study, not personal"
                    multiline
                    style={styles.reason}
                  />
                ) : null}
              </View>
            );
          })}
        </View>
      ) : null}

      {leftOut.length > 0 ? (
        <View style={styles.section} testID="left-out-columns">
          <Heading level={3}>Columns that would be left out</Heading>
          <Notice tone="caution">
            These columns are not read as regions. Nothing is left out without your say: leave each
            one out, or fix the file and upload it again
            {preview.layout !== "long"
              ? "; a column with numbers can also be used as a region"
              : ""}
            .
          </Notice>
          {leftOut.map(({ column, message }) => {
            const value =
              decisions.leaveOut?.[column] === true
                ? "leave"
                : decisions.types[column] === "number"
                  ? "region"
                  : null;
            return (
              <View key={column} style={styles.identifier} testID="left-out-column">
                <Txt kind="small">{message}</Txt>
                <Choice
                  label={`What to do with ${column}`}
                  options={
                    preview.layout !== "long" ? [leaveOutOption, regionOption] : [leaveOutOption]
                  }
                  value={value}
                  onChange={(choice) => setLeftOut(column, choice)}
                />
              </View>
            );
          })}
        </View>
      ) : null}

      {listed.length > 0 || hiddenProblems > 0 ? (
        <View style={styles.section} testID="preview-problems">
          <Heading level={3}>Problems to resolve</Heading>
          {listed.map((p, k) => (
            <Txt key={`${k}-${p.message}`} kind="small" style={styles.problem}>
              • {p.message}
            </Txt>
          ))}
          {hiddenProblems > 0 ? (
            <Txt kind="small">… and {plural(hiddenProblems, "more problem")} not listed.</Txt>
          ) : null}
          <Txt kind="caption">
            A text cell in a numeric column is resolved by typing the column as a category below;
            otherwise fix the file and upload it again.
          </Txt>
        </View>
      ) : open.length === 0 ? (
        <Notice tone="success">
          {preview.problems.length === 0
            ? "No problems found in the file."
            : "Your choices above resolve every problem found."}
        </Notice>
      ) : null}

      <View style={styles.section}>
        <Heading level={3}>Columns and their types</Heading>
        <Txt kind="caption">
          {preview.kind === "brain"
            ? "In a wide brain table every numeric column is a region, with its standard errors paired by suffix. Mark a column “not used” to leave it out."
            : "Numbers can be used as predictors and covariates; categories as groups. Change a type where the detection is wrong."}
        </Txt>
        <ColumnTypes preview={preview} decisions={decisions} onType={setType} />
      </View>

      <View style={styles.section}>
        <Heading level={3}>First rows as written</Heading>
        <FileRowsTable
          label={`First rows of ${preview.fileName}`}
          columns={fileColumns}
          idIndex={idIndex}
          rows={cellRows}
          testID="preview-rows"
        />
      </View>

      {undecided.length > 0 ? (
        <View style={styles.section} testID="undecided">
          {undecided.map((m) => (
            <Txt key={m} kind="small" style={styles.problem}>
              {m}
            </Txt>
          ))}
        </View>
      ) : null}
      {confirm.error ? (
        <ProblemList
          error={confirm.error}
          title="The version was not stored"
          testID="confirm-problems"
        />
      ) : null}
      <View style={styles.actions}>
        <Button
          label="Confirm and store this version"
          onPress={() => mutateThen(confirm, confirmInput(preview, decisions), props.onConfirmed)}
          busy={confirm.isPending}
          disabled={undecided.length > 0}
          testID="confirm-upload"
        />
        <Button
          label="Cancel"
          variant="secondary"
          onPress={props.onCancel}
          disabled={confirm.isPending}
          testID="cancel-upload"
        />
      </View>
      <Txt kind="caption">
        Cancel stores nothing. A preview that is not confirmed expires after an hour.
      </Txt>
    </Card>
  );
}

function summaryOf(c: ColumnPreview): string {
  const parts: string[] = [];
  if (c.min !== undefined && c.max !== undefined)
    parts.push(`${formatValue(c.min, 4)} to ${formatValue(c.max, 4)}`);
  if (c.distinct !== undefined) parts.push(plural(c.distinct, "distinct value"));
  return parts.join(" · ");
}

function ColumnTypes(props: {
  preview: DatasetPreview;
  decisions: Decisions;
  onType: (column: string, chosen: TypeChoice) => void;
}) {
  const { preview, decisions, onType } = props;
  const columns = useMemo<ColumnDef<ColumnPreview, unknown>[]>(
    () =>
      withTextCells<ColumnPreview>([
        { id: "name", header: "column", accessorFn: (c) => c.name, meta: { width: 128 } },
        {
          id: "type",
          header: "type",
          accessorFn: (c) => chosenType(c, decisions),
          meta: { width: 200 },
          cell: (ctx) => {
            const c = ctx.row.original;
            const choices = typeChoices(preview, c);
            const chosen = chosenType(c, decisions);
            if (choices === null) return <Text style={styles.fixedType}>{chosen}</Text>;
            return (
              <TypeToggle
                column={c.name}
                choices={choices}
                chosen={chosen === "id" ? "category" : chosen}
                detected={c.type}
                onChange={(t) => onType(c.name, t)}
              />
            );
          },
        },
        {
          id: "role",
          header: "role",
          accessorFn: (c) => roleWords[c.role] ?? c.role,
          meta: { width: 136 },
        },
        {
          id: "missing",
          header: "missing",
          accessorFn: (c) => c.missing,
          meta: { numeric: true, decimals: 0, width: 92 },
        },
        {
          id: "values",
          header: "values",
          accessorFn: (c) => summaryOf(c) || null,
          meta: { width: 200 },
        },
        {
          id: "note",
          header: "note",
          accessorFn: (c) =>
            c.note ??
            (c.identifier ? `may hold direct identifiers (${c.identifier.reason})` : null),
          meta: { width: 320 },
        },
      ]),
    [preview, decisions, onType],
  );
  return (
    <DataTable
      label={`Columns of ${preview.fileName}`}
      data={preview.columns}
      columns={columns}
      getRowId={(c) => c.name}
      searchable={preview.columns.length > 25}
      initialPageSize={25}
      testID="preview-columns"
    />
  );
}

function TypeToggle(props: {
  column: string;
  choices: Record<TypeChoice, string>;
  chosen: TypeChoice;
  detected: ColumnPreview["type"];
  onChange: (t: TypeChoice) => void;
}) {
  return (
    <View style={styles.toggle} role="radiogroup" accessibilityLabel={`Type of ${props.column}`}>
      {(["number", "category"] as const).map((t) => {
        const selected = props.chosen === t;
        return (
          <Pressable
            key={t}
            role="radio"
            aria-checked={selected}
            accessibilityLabel={`${props.column}: ${t}${props.choices[t] !== t ? ` (${props.choices[t]})` : ""}${props.detected === t ? " (detected)" : ""}`}
            onPress={() => props.onChange(t)}
            style={[styles.chip, selected && styles.chipSelected]}
          >
            <Text style={[styles.chipText, selected && styles.chipTextSelected]} numberOfLines={1}>
              {props.choices[t]}
            </Text>
          </Pressable>
        );
      })}
    </View>
  );
}

const styles = StyleSheet.create({
  head: { flexDirection: "row", flexWrap: "wrap", alignItems: "center", gap: space.sm },
  shrink: { flexShrink: 1 },
  section: { gap: space.sm, marginTop: space.sm },
  identifier: {
    gap: space.xs,
    paddingVertical: space.sm,
    borderTopWidth: 1,
    borderTopColor: palette.line,
  },
  reason: { minHeight: 64, paddingTop: space.sm },
  problem: { color: palette.danger },
  actions: { flexDirection: "row", flexWrap: "wrap", gap: space.sm, marginTop: space.sm },
  fixedType: { fontSize: type.small, fontFamily: fonts.regular, color: palette.muted },
  toggle: { flexDirection: "row", gap: space.xs },
  chip: {
    height: 30,
    justifyContent: "center",
    paddingHorizontal: space.sm,
    borderRadius: radius.pill,
    borderWidth: 1,
    borderColor: palette.lineStrong,
    backgroundColor: palette.surface,
  },
  chipSelected: { backgroundColor: palette.ink, borderColor: palette.ink },
  chipText: { fontFamily: fonts.semibold, fontSize: type.caption, color: palette.inkSoft },
  chipTextSelected: { color: palette.onInk },
});
