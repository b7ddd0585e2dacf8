/**
 * The publish panel's "Download report" (the fit's report bundle, a ZIP of
 * every file a paper needs: services/fit-report.ts) and, for a sealed fit,
 * the bundle's own SHA-256 beside the seal's. The bundle is deterministic,
 * so that hash names the bytes this person downloads; it is computed on
 * the server when first asked for (GET /api/fits/:fitId/report.sha256).
 */
import { StyleSheet, View } from "react-native";
import type { FitView } from "../../hooks/use-fits";
import { reportZipHref, useReportHash } from "../../hooks/use-fit-report";
import { DownloadLink } from "../datasets/download-link";
import { fonts, palette, space } from "../theme";
import { Txt } from "../ui";

export function ReportDownload({ fit }: { fit: FitView }) {
  const sealed = fit.status === "done" && fit.seal !== null;
  const hash = useReportHash(fit.id, sealed);
  if (fit.status !== "done") return null;
  return (
    <View style={styles.root} testID="report-download">
      <View style={styles.row}>
        <DownloadLink
          label="Download report"
          href={reportZipHref(fit.id)}
          testID="download-report"
        />
        <Txt kind="caption" style={styles.muted}>
          ZIP: methods, tables, figures{fit.participantsVisible ? ", recipe" : ""}, inputs,
          set-asides, activity{sealed ? ", seal" : ""}
        </Txt>
      </View>
      {sealed ? (
        <Txt kind="caption" style={styles.hash} selectable testID="report-hash">
          {hash.isPending
            ? "SHA-256 of the report bundle: computing…"
            : hash.isError
              ? "SHA-256 of the report bundle could not be computed."
              : `SHA-256 of the report bundle: ${hash.data.sha256}`}
        </Txt>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.xs },
  row: { flexDirection: "row", flexWrap: "wrap", alignItems: "center", gap: space.sm },
  muted: { color: palette.muted, flexShrink: 1 },
  hash: { color: palette.muted, fontFamily: fonts.mono },
});
