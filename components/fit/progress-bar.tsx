import { StyleSheet, View } from "react-native";
import { Txt } from "../ui";
import { palette, radius, space } from "../theme";

/** Progress of a running fit with the time left in words. */
export function ProgressBar(props: { fraction: number; secondsLeft: number | null }) {
  const percent = Math.max(0, Math.min(100, Math.round(props.fraction * 100)));
  return (
    <View style={styles.root} accessibilityRole="progressbar" accessibilityValue={{ min: 0, max: 100, now: percent }} testID="fit-progress">
      <View style={styles.track}>
        <View style={[styles.fill, { width: `${percent}%` }]} />
      </View>
      <Txt kind="caption">
        {percent}% · {timeLeft(props.secondsLeft)}
      </Txt>
    </View>
  );
}

export function timeLeft(seconds: number | null): string {
  if (seconds === null || !Number.isFinite(seconds)) return "estimating time left";
  if (seconds < 1) return "finishing";
  if (seconds < 60) return `about ${Math.ceil(seconds)} s left`;
  return `about ${Math.ceil(seconds / 60)} min left`;
}

const styles = StyleSheet.create({
  root: { gap: space.xs },
  track: { height: 8, borderRadius: radius.pill, backgroundColor: palette.canvasDeep, overflow: "hidden" },
  fill: { height: 8, backgroundColor: palette.accent },
});
