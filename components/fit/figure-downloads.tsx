/**
 * The "Figure" downloads beside a plot: the same plot as SVG (one column
 * wide, text as outlines) and as a 300-dpi PNG one column (89 mm) or two
 * columns (183 mm) wide, and its caption as plain text — all drawn on the
 * server from the layout the screen uses (server/services/fit-figures.ts).
 * Each link is at least 44 px tall; the row wraps on a phone.
 */
import { StyleSheet, View } from "react-native";
import { figureHref } from "../../hooks/use-fit-figures";
import { DownloadLink } from "../datasets/download-link";
import { palette, space } from "../theme";
import { Txt } from "../ui";

export function FigureDownloads(props: {
  fitId: string;
  /** The figure's stable name (see figureName in contract/views/figures.ts). */
  name: string;
  /** What the figure shows, for the group's accessible name, e.g. "scatter plot of L_dlpfc". */
  label: string;
  testID?: string;
}) {
  const { fitId, name } = props;
  const id = props.testID ?? `figure-${name}`;
  return (
    <View
      style={styles.row}
      role="group"
      accessibilityLabel={`Download the ${props.label} as a figure`}
      testID={id}
    >
      <Txt kind="caption" style={styles.label}>
        Figure
      </Txt>
      <DownloadLink label="SVG" href={figureHref(fitId, name, "svg", 89)} testID={`${id}-svg`} />
      <DownloadLink
        label="PNG 1 col"
        href={figureHref(fitId, name, "png", 89)}
        testID={`${id}-png-89`}
      />
      <DownloadLink
        label="PNG 2 col"
        href={figureHref(fitId, name, "png", 183)}
        testID={`${id}-png-183`}
      />
      <DownloadLink
        label="Caption"
        href={figureHref(fitId, name, "txt")}
        testID={`${id}-caption`}
      />
    </View>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: "row", flexWrap: "wrap", alignItems: "center", gap: space.sm },
  label: { color: palette.muted },
});
