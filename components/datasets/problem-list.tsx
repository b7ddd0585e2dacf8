/**
 * An error answer shown as a list: each problem of a refused file on its own
 * line (each names the file, row and column), "and N more", or the error's
 * message when it carries no list.
 */
import { StyleSheet, View } from "react-native";
import { palette, radius, space } from "../theme";
import { Txt } from "../ui";
import { plural } from "./dataset-format";
import { problemsFrom } from "./upload-decisions";

export function ProblemList(props: { error: unknown; title: string; testID?: string }) {
  const shown = problemsFrom(props.error);
  const message = props.error instanceof Error ? props.error.message : "Something went wrong.";
  return (
    <View style={styles.root} accessibilityRole="alert" testID={props.testID}>
      <Txt kind="label" style={styles.title}>
        {props.title}
      </Txt>
      {shown ? (
        <View accessibilityRole="list" style={styles.list}>
          {shown.messages.map((m, k) => (
            <Txt key={`${k}-${m}`} kind="small" style={styles.item} testID="problem">
              • {m}
            </Txt>
          ))}
          {shown.more > 0 ? (
            <Txt kind="small" style={styles.item}>
              … and {plural(shown.more, "more problem")} of the same kind or elsewhere in the file.
            </Txt>
          ) : null}
        </View>
      ) : (
        <Txt kind="small" style={styles.item} testID="problem">
          {message}
        </Txt>
      )}
    </View>
  );
}

const styles = StyleSheet.create({
  root: { backgroundColor: palette.dangerSoft, borderLeftWidth: 4, borderLeftColor: palette.danger, borderRadius: radius.md, padding: space.md, gap: space.xs },
  title: { color: palette.danger },
  list: { gap: 2 },
  item: { color: palette.ink },
});
