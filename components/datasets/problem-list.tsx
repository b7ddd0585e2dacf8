/**
 * An error answer shown as a list: each problem of a refused file on its own
 * line (each names the file, row and column), the first few at once and the
 * rest on request, "and N more" for those the server did not carry, or the
 * error's message when it carries no list.
 */

/** Problems shown before "Show all". */
export const PROBLEMS_SHOWN = 5;
import { useState } from "react";
import { StyleSheet, View } from "react-native";
import { palette, radius, space } from "../theme";
import { Button, Txt } from "../ui";
import { plural } from "./dataset-format";
import { problemsFrom } from "./upload-decisions";

export function ProblemList(props: { error: unknown; title: string; testID?: string }) {
  const shown = problemsFrom(props.error);
  const [all, setAll] = useState(false);
  const listed =
    shown === null ? [] : all ? shown.messages : shown.messages.slice(0, PROBLEMS_SHOWN);
  const folded = shown === null ? 0 : shown.messages.length - listed.length;
  const message = props.error instanceof Error ? props.error.message : "Something went wrong.";
  return (
    <View style={styles.root} accessibilityRole="alert" testID={props.testID}>
      <Txt kind="label" style={styles.title}>
        {props.title}
      </Txt>
      {shown ? (
        <View accessibilityRole="list" style={styles.list}>
          {listed.map((m, k) => (
            <Txt key={`${k}-${m}`} kind="small" style={styles.item} testID="problem">
              • {m}
            </Txt>
          ))}
          {folded > 0 || all ? (
            <Button
              label={all ? "Show fewer" : `Show all ${shown.messages.length} problems listed`}
              variant="quiet"
              onPress={() => setAll(!all)}
              style={styles.toggle}
            />
          ) : null}
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
  root: {
    backgroundColor: palette.dangerSoft,
    borderLeftWidth: 4,
    borderLeftColor: palette.danger,
    borderRadius: radius.md,
    padding: space.md,
    gap: space.xs,
  },
  title: { color: palette.danger },
  list: { gap: 2 },
  item: { color: palette.ink },
  toggle: { alignSelf: "flex-start", paddingHorizontal: 0 },
});
