import { Pressable, StyleSheet, Text, View } from "react-native";
import { fonts, palette, radius, space, type } from "./theme";
import { Txt } from "./ui";

export interface ChoiceOption<T extends string> {
  value: T;
  label: string;
  hint?: string;
}

/** A labelled row of chips; exactly one chosen (radio semantics). */
export function Choice<T extends string>(props: {
  label: string;
  options: readonly ChoiceOption<T>[];
  value: T | null;
  onChange: (value: T) => void;
  testID?: string;
  disabled?: boolean;
}) {
  return (
    <View
      style={styles.root}
      accessibilityRole="radiogroup"
      accessibilityLabel={props.label}
      testID={props.testID}
    >
      <Txt kind="label">{props.label}</Txt>
      <View style={styles.row}>
        {props.options.map((option) => {
          const selected = option.value === props.value;
          return (
            <Pressable
              key={option.value}
              accessibilityRole="radio"
              accessibilityState={{ checked: selected, disabled: props.disabled }}
              accessibilityLabel={option.hint ? `${option.label}: ${option.hint}` : option.label}
              disabled={props.disabled}
              onPress={() => props.onChange(option.value)}
              style={[styles.chip, selected && styles.chipSelected]}
            >
              <Text style={[styles.chipText, selected && styles.chipTextSelected]}>
                {option.label}
              </Text>
            </Pressable>
          );
        })}
      </View>
    </View>
  );
}

/** Several chips, any number chosen (checkbox semantics). */
export function MultiChoice(props: {
  label: string;
  options: readonly ChoiceOption<string>[];
  values: readonly string[];
  onChange: (values: string[]) => void;
  testID?: string;
}) {
  const toggle = (value: string) => {
    props.onChange(
      props.values.includes(value)
        ? props.values.filter((v) => v !== value)
        : [...props.values, value],
    );
  };
  return (
    <View style={styles.root} accessibilityLabel={props.label} testID={props.testID}>
      <Txt kind="label">{props.label}</Txt>
      <View style={styles.row}>
        {props.options.map((option) => {
          const selected = props.values.includes(option.value);
          return (
            <Pressable
              key={option.value}
              accessibilityRole="checkbox"
              accessibilityState={{ checked: selected }}
              accessibilityLabel={option.label}
              onPress={() => toggle(option.value)}
              style={[styles.chip, selected && styles.chipSelected]}
            >
              <Text style={[styles.chipText, selected && styles.chipTextSelected]}>
                {option.label}
              </Text>
            </Pressable>
          );
        })}
      </View>
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.xs },
  row: { flexDirection: "row", flexWrap: "wrap", gap: space.sm },
  chip: {
    minHeight: 44,
    justifyContent: "center",
    paddingHorizontal: space.md,
    borderRadius: radius.pill,
    borderWidth: 1,
    borderColor: palette.lineStrong,
    backgroundColor: palette.surface,
  },
  chipSelected: { backgroundColor: palette.ink, borderColor: palette.ink },
  chipText: { fontFamily: fonts.semibold, fontSize: type.small, color: palette.inkSoft },
  chipTextSelected: { color: palette.onInk },
});
