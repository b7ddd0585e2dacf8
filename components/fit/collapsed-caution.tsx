/**
 * A long caution shown on one line with "more" for the rest, so it does not
 * fill a phone's first screen: the title in bold, the text cut at the end
 * of the line until the person asks for all of it.
 */
import { useState } from "react";
import { Pressable, StyleSheet, View } from "react-native";
import { Txt } from "../ui";
import { fonts, palette, radius, space, type } from "../theme";

export function CollapsedCaution(props: {
  title: string;
  text: string;
  /** Words for the caution in the button's accessible name, e.g. "small-sample caution". */
  name: string;
  testID?: string;
}) {
  const [open, setOpen] = useState(false);
  return (
    <View style={styles.root} testID={props.testID} accessibilityRole="summary">
      <Txt kind="small" numberOfLines={open ? undefined : 1} style={styles.text}>
        <Txt kind="small" style={styles.title}>
          {props.title}:{" "}
        </Txt>
        {props.text}
      </Txt>
      <Pressable
        accessibilityRole="button"
        accessibilityState={{ expanded: open }}
        accessibilityLabel={
          open ? `Show less of the ${props.name}` : `Read the whole ${props.name}`
        }
        onPress={() => setOpen(!open)}
        style={({ pressed }) => [styles.more, pressed && styles.pressed]}
      >
        <Txt kind="small" style={styles.moreText}>
          {open ? "less" : "more"}
        </Txt>
      </Pressable>
    </View>
  );
}

const styles = StyleSheet.create({
  root: {
    flexDirection: "row",
    alignItems: "center",
    gap: space.sm,
    paddingLeft: space.md,
    borderRadius: radius.md,
    backgroundColor: palette.warningSoft,
  },
  text: { flex: 1, paddingVertical: space.xs },
  title: { fontFamily: fonts.semibold, color: palette.warning },
  more: { minHeight: 44, minWidth: 44, justifyContent: "center", alignItems: "center" },
  moreText: { color: palette.focus, textDecorationLine: "underline", fontSize: type.small },
  pressed: { opacity: 0.7 },
});
