/**
 * The look of the fit header's disclosures (set-asides, plan deviations,
 * rules of the model): a 44-px bar that opens a list of items, each with a
 * rule at its left. One definition for every disclosure of the header.
 */
import { StyleSheet } from "react-native";
import { fonts, palette, radius, space } from "../theme";

export const disclosureStyles = StyleSheet.create({
  disclosure: {
    minHeight: 44,
    flexDirection: "row",
    alignItems: "center",
    justifyContent: "space-between",
    gap: space.sm,
    paddingHorizontal: space.md,
    borderRadius: radius.md,
    borderWidth: 1,
    borderColor: palette.line,
    backgroundColor: palette.canvas,
  },
  pressed: { opacity: 0.7 },
  list: { gap: space.sm, paddingTop: space.sm },
  item: { gap: 2, paddingLeft: space.md, borderLeftWidth: 3, borderLeftColor: palette.lineStrong },
  itemTitle: { fontFamily: fonts.semibold },
});
