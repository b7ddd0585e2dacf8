/**
 * The stored versions of a study's brain table and participant sheet: the
 * current version of each (file, version, who uploaded and confirmed it and
 * when, rows, participants, regions, SHA-256), the older versions below it,
 * and any version's rows on request. Participant-level rows are left out for
 * roles that may not read them.
 */
import { useMemo, useState } from "react";
import { StyleSheet, View } from "react-native";
import {
  type DatasetKind,
  type DatasetVersion,
  isVersion,
  useDataset,
  useDatasets,
} from "../../hooks/use-datasets";
import { formatCount } from "../charts/number-format";
import { palette, space } from "../theme";
import { Badge, Button, Card, Failure, Heading, Notice, Pending, Txt } from "../ui";
import {
  formatBytes,
  formatWhen,
  kindLabel,
  personName,
  plural,
  shortHash,
} from "./dataset-format";
import { FileRowsTable } from "./file-rows-table";

/** Rows fetched from the server at once when reading a version. */
export const VERSION_ROWS_PAGE = 500;

const kinds: readonly DatasetKind[] = ["brain", "participants"];

export function DatasetVersions(props: { studyId: string; canReadRows: boolean }) {
  const datasets = useDatasets(props.studyId);
  const [reading, setReading] = useState<string | null>(null);
  if (datasets.isPending) return <Pending label="Loading the data versions…" />;
  if (datasets.isError)
    return <Failure error={datasets.error} onRetry={() => datasets.refetch()} />;
  const versions = datasets.data.filter(isVersion);
  const toggle = (id: string) => setReading((current) => (current === id ? null : id));
  const read = versions.find((v) => v.id === reading);
  return (
    <View style={styles.root}>
      <View style={styles.kinds}>
        {kinds.map((kind) => {
          const ofKind = versions
            .filter((v) => v.kind === kind)
            .sort((a, b) => b.version - a.version);
          const current = ofKind.find((v) => v.current) ?? ofKind[0];
          const older = ofKind.filter((v) => v !== current);
          return (
            <Card key={kind} style={styles.kind} testID={`versions-${kind}`}>
              <Heading level={2}>{kindLabel[kind]}</Heading>
              {current === undefined ? (
                <Txt kind="small" style={styles.muted}>
                  No {kindLabel[kind].toLowerCase()} yet.
                </Txt>
              ) : (
                <>
                  <VersionFacts version={current} />
                  <Button
                    label={reading === current.id ? "Hide rows" : "Read rows"}
                    variant="secondary"
                    onPress={() => toggle(current.id)}
                    accessibilityLabel={`${reading === current.id ? "Hide" : "Read"} rows of version ${current.version} of the ${kindLabel[kind].toLowerCase()}`}
                    style={styles.readButton}
                  />
                </>
              )}
              {older.length > 0 ? (
                <View style={styles.older} testID={`older-${kind}`}>
                  <Heading level={3}>Older versions</Heading>
                  {older.map((v) => (
                    <View key={v.id} style={styles.olderRow} testID="older-version">
                      <View style={styles.shrink}>
                        <Txt kind="small">
                          Version {v.version} · <Txt kind="mono">{v.fileName}</Txt>
                        </Txt>
                        <Txt kind="caption">
                          {formatWhen(v.confirmedAt)} · {personName(v.uploadedBy)} ·{" "}
                          {plural(v.participantCount, "participant")} · SHA-256{" "}
                          {shortHash(v.sha256)}
                        </Txt>
                      </View>
                      <Button
                        label={reading === v.id ? "Hide" : "Read"}
                        variant="quiet"
                        onPress={() => toggle(v.id)}
                        accessibilityLabel={`${reading === v.id ? "Hide" : "Read"} version ${v.version} of the ${kindLabel[kind].toLowerCase()}`}
                      />
                    </View>
                  ))}
                </View>
              ) : null}
            </Card>
          );
        })}
      </View>
      {read ? (
        <Card testID="version-reader">
          <View style={styles.readerHead}>
            <Heading level={2} style={styles.shrink}>
              {kindLabel[read.kind]}, version {read.version}
            </Heading>
            <Button label="Close" variant="quiet" onPress={() => setReading(null)} />
          </View>
          <VersionFacts version={read} />
          <VersionRows
            key={read.id}
            studyId={props.studyId}
            version={read}
            canReadRows={props.canReadRows}
          />
        </Card>
      ) : null}
    </View>
  );
}

function VersionFacts({ version: v }: { version: DatasetVersion }) {
  const seColumns = v.columns.filter((c) => c.role === "se").length;
  const variables = v.columns.filter((c) => c.role === "variable").length;
  const kept = v.identifierDecisions.filter((d) => d.decision === "kept");
  return (
    <View style={styles.facts} testID="version-facts">
      <View style={styles.factHead}>
        <Txt kind="mono" style={styles.shrink}>
          {v.fileName}
        </Txt>
        <Badge
          label={`version ${v.version}${v.current ? " · current" : ""}`}
          tone={v.current ? "success" : "neutral"}
        />
      </View>
      <Txt kind="small">
        Uploaded by {personName(v.uploadedBy)} on {formatWhen(v.uploadedAt)}
        {v.confirmedBy.id !== v.uploadedBy.id
          ? `; confirmed by ${personName(v.confirmedBy)} on ${formatWhen(v.confirmedAt)}`
          : ""}
        .
      </Txt>
      <Txt kind="small">
        {plural(v.rowCount, "row")} · {plural(v.participantCount, "participant")}
        {v.kind === "brain"
          ? ` · ${plural(v.regions?.length ?? 0, "region")}${seColumns > 0 ? ` (${formatCount(seColumns)} with standard errors)` : ""} · ${v.layout ?? "wide"} layout · ${
              v.sessionColumn ? `session column ${v.sessionColumn}` : "no session column"
            }`
          : ` · ${plural(variables, "variable")}`}
      </Txt>
      <Txt kind="caption">
        SHA-256 {shortHash(v.sha256)} · {formatBytes(v.byteSize)} · id column {v.idColumn}
      </Txt>
      {v.droppedColumns.length > 0 ? (
        <Txt kind="caption">Dropped at upload (never stored): {v.droppedColumns.join(", ")}.</Txt>
      ) : null}
      {kept.map((d) => (
        <Txt key={d.column} kind="caption">
          Kept {d.column} although it may hold direct identifiers. Reason: {d.reason}
        </Txt>
      ))}
    </View>
  );
}

function VersionRows(props: { studyId: string; version: DatasetVersion; canReadRows: boolean }) {
  const [offset, setOffset] = useState(0);
  const dataset = useDataset(props.studyId, props.version.id, offset, VERSION_ROWS_PAGE);
  const columns = useMemo(
    () => props.version.columns.map((c) => ({ name: c.name, numeric: c.type === "number" })),
    [props.version.columns],
  );
  const idIndex = Math.max(
    0,
    props.version.columns.findIndex((c) => c.role === "id"),
  );
  if (!props.canReadRows)
    return (
      <Notice>
        This study restricts participant-level rows; your role sees the counts above, not the rows.
      </Notice>
    );
  if (dataset.isPending) return <Pending label="Loading rows…" />;
  if (dataset.isError) return <Failure error={dataset.error} onRetry={() => dataset.refetch()} />;
  const page = dataset.data.rows;
  if (page === null)
    return (
      <Notice>
        This study restricts participant-level rows; your role sees the counts above, not the rows.
      </Notice>
    );
  const last = Math.min(page.total, page.offset + page.items.length);
  return (
    <View style={styles.rows} testID="version-rows">
      {page.total > VERSION_ROWS_PAGE ? (
        <View style={styles.serverPager}>
          <Txt kind="small" style={styles.muted}>
            Rows {formatCount(page.offset + 1)}–{formatCount(last)} of {formatCount(page.total)}{" "}
            loaded
          </Txt>
          <Button
            label={`Previous ${VERSION_ROWS_PAGE}`}
            variant="secondary"
            disabled={page.offset === 0}
            onPress={() => setOffset(Math.max(0, offset - VERSION_ROWS_PAGE))}
          />
          <Button
            label={`Next ${VERSION_ROWS_PAGE}`}
            variant="secondary"
            disabled={last >= page.total}
            onPress={() => setOffset(offset + VERSION_ROWS_PAGE)}
          />
        </View>
      ) : null}
      <FileRowsTable
        label={`Rows of ${props.version.fileName}, version ${props.version.version}`}
        columns={columns}
        idIndex={idIndex}
        rows={page.items}
        testID="version-rows-table"
      />
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.lg },
  kinds: { flexDirection: "row", flexWrap: "wrap", alignItems: "flex-start", gap: space.lg },
  readerHead: {
    flexDirection: "row",
    alignItems: "center",
    justifyContent: "space-between",
    gap: space.sm,
  },
  kind: { flexGrow: 1, flexBasis: 320, minWidth: 0 },
  muted: { color: palette.muted },
  shrink: { flexShrink: 1 },
  readButton: { alignSelf: "flex-start" },
  older: { gap: space.xs, marginTop: space.sm },
  olderRow: {
    flexDirection: "row",
    alignItems: "center",
    justifyContent: "space-between",
    gap: space.sm,
    paddingVertical: space.xs,
    borderTopWidth: 1,
    borderTopColor: palette.line,
  },
  facts: { gap: 2 },
  factHead: { flexDirection: "row", flexWrap: "wrap", alignItems: "center", gap: space.sm },
  rows: { gap: space.sm },
  serverPager: { flexDirection: "row", flexWrap: "wrap", alignItems: "center", gap: space.sm },
});
