/**
 * The "Figure" downloads beside the planner's power curve, as the fit's
 * plots have them (fit/figure-downloads.tsx): the curve as SVG (one column
 * wide, text as outlines), as a 300-dpi PNG one column (89 mm) or two
 * columns (183 mm) wide, and its caption as plain text. The server answers
 * the same question again and draws the figure from the layout the screen
 * uses (server/services/planner-figures.ts), so the question is posted with
 * each download. Each link is at least 44 px tall; the row wraps on a phone.
 */
import { useState } from "react";
import { StyleSheet, View } from "react-native";
import {
  fetchPlannerFigure,
  type PlannerFigureFile,
  type PlannerQuestionInput,
  plannerFigureFile,
} from "../../hooks/use-planner";
import { PostDownloadLink } from "../datasets/post-download-link";
import { palette, space } from "../theme";
import { Notice, Txt } from "../ui";

export function PowerCurveDownloads({ question }: { question: PlannerQuestionInput }) {
  const [problem, setProblem] = useState<string | null>(null);
  const link = (label: string, file: PlannerFigureFile, testID: string) => (
    <PostDownloadLink
      label={label}
      fileName={file.fileName}
      fetchFile={() => fetchPlannerFigure(file, question)}
      onError={(error) => setProblem(error ? error.message : null)}
      testID={testID}
    />
  );
  return (
    <View style={styles.root}>
      <View
        style={styles.row}
        role="group"
        accessibilityLabel="Download the power curve as a figure"
        testID="figure-power-curve"
      >
        <Txt kind="caption" style={styles.label}>
          Figure
        </Txt>
        {link("SVG", plannerFigureFile("svg", 89), "figure-power-curve-svg")}
        {link("PNG 1 col", plannerFigureFile("png", 89), "figure-power-curve-png-89")}
        {link("PNG 2 col", plannerFigureFile("png", 183), "figure-power-curve-png-183")}
        {link("Caption", plannerFigureFile("txt"), "figure-power-curve-caption")}
      </View>
      {problem ? <Notice tone="danger">{problem}</Notice> : null}
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.sm },
  row: { flexDirection: "row", flexWrap: "wrap", alignItems: "center", gap: space.sm },
  label: { color: palette.muted },
});
