import { StyleSheet, View } from "react-native";
import { Txt } from "../ui";
import { palette, radius, space } from "../theme";

/** Progress of a running fit; the time left in words once the server has an estimate (after the first 5 %, server/jobs/time-left.ts). */
export function ProgressBar(props: { fraction: number; secondsLeft: number | null }) {
  const percent = Math.max(0, Math.min(100, Math.round(props.fraction * 100)));
  return (
    <View
      style={styles.root}
      accessibilityRole="progressbar"
      accessibilityValue={{ min: 0, max: 100, now: percent }}
      testID="fit-progress"
    >
      <View style={styles.track}>
        <View style={[styles.fill, { width: `${percent}%` }]} />
      </View>
      <Txt kind="caption">{progressWords(percent, props.secondsLeft)}</Txt>
    </View>
  );
}

/** "37% done · about 2 min left", or the fraction only while there is no estimate. */
export function progressWords(percent: number, seconds: number | null): string {
  if (seconds === null || !Number.isFinite(seconds)) return `${percent}% done`;
  return `${percent}% done · ${timeLeft(seconds)}`;
}

function timeLeft(seconds: number): string {
  if (seconds < 1) return "finishing";
  if (seconds < 60) return `about ${Math.ceil(seconds)} s left`;
  return `about ${Math.ceil(seconds / 60)} min left`;
}

const styles = StyleSheet.create({
  root: { gap: space.xs },
  track: {
    height: 8,
    borderRadius: radius.pill,
    backgroundColor: palette.canvasDeep,
    overflow: "hidden",
  },
  fill: { height: 8, backgroundColor: palette.accent },
});
