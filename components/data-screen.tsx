/**
 * A study's Data section: the stored versions of its brain table and
 * participant sheet, the upload flow with its preview (Owners and
 * Analysts), the study's set-asides (current ones with Restore, restored
 * ones as history), the join report and the roster table with its CSV
 * export, then the reliability of the measures (regions across sessions;
 * stated trait reliabilities).
 * Viewers of a restricted study see counts, never participant rows.
 */
import { StyleSheet, View } from "react-native";
import { can, useStudy } from "../hooks/use-study";
import { rosterCsvUrl, useRoster } from "../hooks/use-roster";
import { DatasetVersions } from "./datasets/dataset-versions";
import { DownloadLink } from "./datasets/download-link";
import { JoinReport } from "./datasets/join-report";
import { RosterTable } from "./datasets/roster-table";
import { UploadPanel } from "./datasets/upload-panel";
import { ReliabilitySection } from "./measurement/reliability-section";
import { SetAsideSection } from "./set-asides/set-aside-section";
import { palette, space } from "./theme";
import { Card, Failure, Heading, Notice, Pending, Txt } from "./ui";

export function DataScreen(props: { studyId: string }) {
  const study = useStudy(props.studyId);
  if (study.isPending) return <Pending />;
  if (study.isError) return <Failure error={study.error} onRetry={() => study.refetch()} />;
  const canUpload = can(study.data, "data.upload");
  const canReadRows = can(study.data, "participants.read");
  return (
    <View style={styles.root}>
      <DatasetVersions studyId={props.studyId} canReadRows={canReadRows} />
      {canUpload ? (
        <UploadPanel studyId={props.studyId} />
      ) : (
        <Notice>
          {study.data.archivedAt
            ? "This study is archived: no data can be uploaded until an Owner unarchives it."
            : "Owners and Analysts upload data; your role reads it."}
        </Notice>
      )}
      <SetAsideSection
        studyId={props.studyId}
        canRestore={can(study.data, "participants.set-aside")}
      />
      <RosterSection studyId={props.studyId} canMap={canUpload} />
      <ReliabilitySection studyId={props.studyId} canEdit={canUpload} />
    </View>
  );
}

function RosterSection(props: { studyId: string; canMap: boolean }) {
  const roster = useRoster(props.studyId);
  if (roster.isPending) return <Pending label="Joining the roster…" />;
  if (roster.isError)
    return (
      <Failure
        error={roster.error}
        title="The roster could not be loaded"
        onRetry={() => roster.refetch()}
      />
    );
  const { report, rows } = roster.data;
  return (
    <>
      <JoinReport studyId={props.studyId} report={report} canMap={props.canMap} />
      <Card testID="roster">
        <View style={styles.rosterHead}>
          <Heading level={2} style={styles.shrink}>
            Roster
          </Heading>
          {rows !== null && rows.length > 0 ? (
            <DownloadLink
              label="Download roster.csv"
              href={rosterCsvUrl(props.studyId)}
              testID="roster-csv"
            />
          ) : null}
        </View>
        <Txt kind="small" style={styles.muted}>
          Participants are excluded by setting them aside in a fit, with a written reason that is
          logged — never by editing or re-uploading the files.
        </Txt>
        {rows === null ? (
          <Notice testID="roster-restricted">
            This study restricts participant-level rows: your role sees the join report's counts,
            not the roster's rows.
          </Notice>
        ) : (
          <RosterTable report={report} rows={rows} />
        )}
      </Card>
    </>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.lg },
  rosterHead: {
    flexDirection: "row",
    flexWrap: "wrap",
    alignItems: "center",
    justifyContent: "space-between",
    gap: space.sm,
  },
  shrink: { flexShrink: 1 },
  muted: { color: palette.muted },
});
