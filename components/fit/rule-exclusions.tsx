/**
 * Beside a fit's set-asides: the participants its model's exclusion rules
 * left out — "Left out by this model's rules: N participants", and behind a
 * disclosure each rule (criterion and reason) with its count and, where the
 * caller may see participant rows, the ids. Nothing for a model without
 * rules.
 */
import { useState } from "react";
import { Pressable, StyleSheet, View } from "react-native";
import { ruleText } from "../../contract/exclusion-rules";
import type { FitRuleExclusionView } from "../../contract/views/fits";
import { Txt } from "../ui";
import { fonts, palette } from "../theme";
import { disclosureStyles } from "./disclosure-styles";

const people = (n: number) => `${n} participant${n === 1 ? "" : "s"}`;

/** The disclosure's title: the participants left out by any rule (each once), when known. */
export function ruleExclusionTitle(rules: readonly FitRuleExclusionView[]): string {
  if (rules.some((r) => r.count === null))
    return "Left out by this model's rules: counted when the fit is done";
  if (rules.every((r) => r.participants !== null)) {
    const ids = new Set(rules.flatMap((r) => r.participants ?? []));
    return `Left out by this model's rules: ${people(ids.size)}`;
  }
  if (rules.length === 1) return `Left out by this model's rules: ${people(rules[0].count ?? 0)}`;
  return "Left out by this model's rules";
}

export function RuleExclusions({ rules }: { rules: readonly FitRuleExclusionView[] }) {
  const [open, setOpen] = useState(false);
  if (rules.length === 0) return null;
  const title = ruleExclusionTitle(rules);
  return (
    <View testID="fit-rule-exclusions">
      <Pressable
        accessibilityRole="button"
        accessibilityState={{ expanded: open }}
        accessibilityLabel={`${title}. ${open ? "Hide" : "Show"} the rules`}
        onPress={() => setOpen(!open)}
        style={({ pressed }) => [styles.disclosure, pressed && styles.pressed]}
        testID="fit-rule-exclusions-toggle"
      >
        <Txt kind="small" style={styles.title}>
          {title}
        </Txt>
        <Txt kind="small" style={styles.hint}>
          {open ? "Hide ▴" : "Rules ▾"}
        </Txt>
      </Pressable>
      {open ? (
        <View style={styles.list} testID="fit-rule-exclusions-list">
          {rules.map((r) => (
            <View key={ruleText(r.rule)} style={styles.item} testID="fit-rule-exclusion">
              <Txt kind="small" style={styles.itemTitle}>
                rule: {ruleText(r.rule)}
              </Txt>
              <Txt kind="small">{r.count === null ? "not counted yet" : people(r.count)}</Txt>
              {r.participants && r.participants.length > 0 ? (
                <Txt kind="caption" style={{ color: palette.inkSoft }}>
                  {r.participants.join(", ")}
                </Txt>
              ) : null}
            </View>
          ))}
          <Txt kind="caption" style={{ color: palette.muted }}>
            The rules are part of the model; a participant with a missing value in a rule's column
            is not left out by it.
          </Txt>
        </View>
      ) : null}
    </View>
  );
}

const styles = {
  ...disclosureStyles,
  ...StyleSheet.create({
    title: { fontFamily: fonts.semibold, flexShrink: 1 },
    hint: { color: palette.focus, flexShrink: 0 },
  }),
};
