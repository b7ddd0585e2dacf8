/**
 * The attenuation note beside an association result: the observed r with
 * its interval, the largest r the two measures allow, √(rel_brain ·
 * rel_trait), the r corrected for unreliability with its interval, the
 * reliabilities with their sources, the plain-words caution when there is
 * one, and the method named under it.
 *
 *   {region.attenuation ? <AttenuationNote attenuation={region.attenuation} /> : null}
 */
import { StyleSheet, View } from "react-native";
import { tryLayout } from "../charts/chart-input-error";
import { palette, radius, space } from "../theme";
import { Notice, Txt } from "../ui";
import { type AttenuationInput, attenuationWords } from "./attenuation-words";

export type { AttenuationInput };

export interface AttenuationNoteProps {
  attenuation: AttenuationInput;
  testID?: string;
}

export function AttenuationNote(props: AttenuationNoteProps) {
  const result = tryLayout(() => attenuationWords(props.attenuation));
  if (result.problem !== null) {
    return (
      <View style={styles.problem} accessibilityRole="alert" testID={props.testID}>
        <Txt kind="label" style={styles.problemTitle}>
          The attenuation note cannot be shown
        </Txt>
        <Txt kind="small">{result.problem}</Txt>
      </View>
    );
  }
  const w = result.layout;
  return (
    <View
      style={styles.root}
      testID={props.testID}
      accessibilityLabel="Reliability and attenuation"
    >
      <Txt kind="label">Reliability and attenuation</Txt>
      <Txt kind="small">{w.observed}</Txt>
      <Txt kind="small">
        {w.ceiling} <Txt kind="caption">({w.ceilingWorking})</Txt>
      </Txt>
      <Txt kind="small">{w.corrected}</Txt>
      <Txt kind="caption" style={styles.muted}>
        {w.reliabilities}
      </Txt>
      {w.caution ? <Notice tone="caution">{w.caution}</Notice> : null}
      <Txt kind="caption" style={styles.muted}>
        {w.method}
      </Txt>
    </View>
  );
}

const styles = StyleSheet.create({
  root: {
    gap: space.xs,
    padding: space.md,
    borderRadius: radius.md,
    borderWidth: 1,
    borderColor: palette.line,
    backgroundColor: palette.surface,
  },
  muted: { color: palette.muted },
  problem: {
    backgroundColor: palette.dangerSoft,
    borderRadius: radius.md,
    padding: space.md,
    gap: space.xs,
  },
  problemTitle: { color: palette.danger },
});
