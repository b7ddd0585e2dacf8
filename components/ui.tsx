/**
 * Small building blocks every screen uses: text styles, buttons, cards,
 * fields and the pending / error / empty states. Colours and sizes come from
 * the theme module only.
 */
import type { ReactNode } from "react";
import {
  ActivityIndicator,
  Pressable,
  StyleSheet,
  Text,
  TextInput,
  View,
  type StyleProp,
  type TextInputProps,
  type TextStyle,
  type ViewStyle,
} from "react-native";
import { fonts, palette, radius, space, type } from "./theme";

type TextKind =
  | "display"
  | "headline"
  | "title"
  | "lead"
  | "body"
  | "small"
  | "caption"
  | "label"
  | "mono";

export function Txt(props: {
  kind?: TextKind;
  children: ReactNode;
  style?: StyleProp<TextStyle>;
  numberOfLines?: number;
  accessibilityRole?: "header" | "text" | "alert";
  selectable?: boolean;
  testID?: string;
}) {
  const { kind = "body", children, style, ...rest } = props;
  return (
    <Text {...rest} style={[styles.text, textStyles[kind], style]}>
      {children}
    </Text>
  );
}

export function Heading(props: {
  children: ReactNode;
  level?: 1 | 2 | 3;
  style?: StyleProp<TextStyle>;
}) {
  const kind: TextKind = props.level === 3 ? "lead" : props.level === 2 ? "title" : "headline";
  return (
    <Txt
      kind={kind}
      accessibilityRole="header"
      style={[props.level === 3 ? styles.h3 : null, props.style]}
    >
      {props.children}
    </Txt>
  );
}

export function Button(props: {
  label: string;
  onPress: () => void;
  variant?: "primary" | "secondary" | "quiet" | "danger";
  disabled?: boolean;
  busy?: boolean;
  style?: StyleProp<ViewStyle>;
  accessibilityLabel?: string;
  testID?: string;
}) {
  const { label, onPress, variant = "primary", disabled, busy, style } = props;
  const inactive = disabled || busy;
  return (
    <Pressable
      accessibilityRole="button"
      accessibilityLabel={props.accessibilityLabel ?? label}
      accessibilityState={{ disabled: !!inactive, busy: !!busy }}
      testID={props.testID}
      disabled={inactive}
      onPress={onPress}
      style={({ pressed }) => [
        styles.button,
        buttonStyles[variant],
        inactive && styles.buttonDisabled,
        pressed && styles.buttonPressed,
        style,
      ]}
    >
      {busy ? (
        <ActivityIndicator
          size="small"
          color={variant === "primary" ? palette.onInk : palette.ink}
          style={styles.spinner}
        />
      ) : null}
      <Text style={[styles.buttonLabel, buttonLabelStyles[variant]]}>{label}</Text>
    </Pressable>
  );
}

export function Card(props: {
  children: ReactNode;
  style?: StyleProp<ViewStyle>;
  testID?: string;
}) {
  return (
    <View style={[styles.card, props.style]} testID={props.testID}>
      {props.children}
    </View>
  );
}

export function Field(
  props: TextInputProps & { label: string; hint?: string; error?: string | null },
) {
  const { label, hint, error, style, ...input } = props;
  return (
    <View style={styles.field}>
      <Txt kind="label">{label}</Txt>
      <TextInput
        accessibilityLabel={label}
        placeholderTextColor={palette.faint}
        {...input}
        style={[styles.input, error ? styles.inputError : null, style]}
      />
      {error ? (
        <Txt kind="small" style={styles.errorText} accessibilityRole="alert">
          {error}
        </Txt>
      ) : hint ? (
        <Txt kind="small" style={styles.hint}>
          {hint}
        </Txt>
      ) : null}
    </View>
  );
}

export function Pending(props: { label?: string }) {
  return (
    <View style={styles.state} accessibilityLabel={props.label ?? "Loading"}>
      <ActivityIndicator color={palette.ink} />
      <Txt kind="small" style={styles.hint}>
        {props.label ?? "Loading…"}
      </Txt>
    </View>
  );
}

export function Failure(props: { error: unknown; onRetry?: () => void; title?: string }) {
  const message = props.error instanceof Error ? props.error.message : "Something went wrong.";
  return (
    <View style={[styles.state, styles.failure]} accessibilityRole="alert">
      <Txt kind="lead" style={{ color: palette.danger }}>
        {props.title ?? "This could not be loaded"}
      </Txt>
      <Txt kind="small" style={styles.hint}>
        {message}
      </Txt>
      {props.onRetry ? (
        <Button label="Try again" variant="secondary" onPress={props.onRetry} />
      ) : null}
    </View>
  );
}

export function Empty(props: { title: string; children?: ReactNode }) {
  return (
    <View style={styles.state}>
      <Txt kind="lead">{props.title}</Txt>
      {props.children}
    </View>
  );
}

export function Notice(props: {
  tone?: "info" | "caution" | "danger" | "success";
  title?: string;
  children: ReactNode;
  testID?: string;
}) {
  const tone = props.tone ?? "info";
  return (
    <View
      style={[styles.notice, noticeStyles[tone]]}
      testID={props.testID}
      accessibilityRole="summary"
    >
      {props.title ? <Txt kind="label">{props.title}</Txt> : null}
      <Txt kind="small" style={{ color: palette.inkSoft }}>
        {props.children}
      </Txt>
    </View>
  );
}

export function Badge(props: {
  label: string;
  tone?: "neutral" | "accent" | "danger" | "success";
}) {
  const tone = props.tone ?? "neutral";
  return (
    <View style={[styles.badge, badgeStyles[tone]]}>
      <Text style={styles.badgeText}>{props.label}</Text>
    </View>
  );
}

const styles = StyleSheet.create({
  text: { color: palette.ink, fontFamily: fonts.regular },
  h3: { fontFamily: fonts.semibold },
  button: {
    minHeight: 44,
    paddingHorizontal: space.lg,
    borderRadius: radius.md,
    alignItems: "center",
    justifyContent: "center",
    flexDirection: "row",
    borderWidth: 1,
  },
  buttonDisabled: { opacity: 0.5 },
  buttonPressed: { opacity: 0.8 },
  buttonLabel: { fontFamily: fonts.semibold, fontSize: type.body },
  spinner: { marginRight: space.sm },
  card: {
    backgroundColor: palette.surface,
    borderRadius: radius.lg,
    borderWidth: 1,
    borderColor: palette.line,
    padding: space.lg,
    gap: space.sm,
  },
  field: { gap: space.xs },
  input: {
    minHeight: 44,
    borderWidth: 1,
    borderColor: palette.lineStrong,
    borderRadius: radius.md,
    paddingHorizontal: space.md,
    fontSize: type.body,
    fontFamily: fonts.regular,
    color: palette.ink,
    backgroundColor: palette.surface,
  },
  inputError: { borderColor: palette.danger },
  errorText: { color: palette.danger },
  hint: { color: palette.muted },
  state: { padding: space.xl, alignItems: "center", gap: space.md },
  failure: { backgroundColor: palette.dangerSoft, borderRadius: radius.lg },
  notice: { borderRadius: radius.md, padding: space.md, gap: space.xs, borderLeftWidth: 4 },
  badge: {
    borderRadius: radius.pill,
    paddingHorizontal: space.sm,
    paddingVertical: 2,
    alignSelf: "flex-start",
  },
  badgeText: { fontFamily: fonts.semibold, fontSize: type.caption, color: palette.ink },
});

const textStyles = StyleSheet.create({
  display: { fontSize: type.display, fontFamily: fonts.bold, letterSpacing: -0.5 },
  headline: { fontSize: type.headline, fontFamily: fonts.bold, letterSpacing: -0.3 },
  title: { fontSize: type.title, fontFamily: fonts.semibold },
  lead: { fontSize: type.lead, fontFamily: fonts.regular },
  body: { fontSize: type.body, lineHeight: 22 },
  small: { fontSize: type.small, lineHeight: 19 },
  caption: { fontSize: type.caption, color: palette.muted },
  label: { fontSize: type.small, fontFamily: fonts.semibold, color: palette.inkSoft },
  mono: { fontSize: type.small, fontFamily: fonts.mono },
});

const buttonStyles = StyleSheet.create({
  primary: { backgroundColor: palette.ink, borderColor: palette.ink },
  secondary: { backgroundColor: palette.surface, borderColor: palette.lineStrong },
  quiet: { backgroundColor: "transparent", borderColor: "transparent" },
  danger: { backgroundColor: palette.danger, borderColor: palette.danger },
});

const buttonLabelStyles = StyleSheet.create({
  primary: { color: palette.onInk },
  secondary: { color: palette.ink },
  quiet: { color: palette.focus },
  danger: { color: palette.onInk },
});

const noticeStyles = StyleSheet.create({
  info: { backgroundColor: palette.canvasDeep, borderLeftColor: palette.inkSoft },
  caution: { backgroundColor: palette.warningSoft, borderLeftColor: palette.accent },
  danger: { backgroundColor: palette.dangerSoft, borderLeftColor: palette.danger },
  success: { backgroundColor: palette.successSoft, borderLeftColor: palette.success },
});

const badgeStyles = StyleSheet.create({
  neutral: { backgroundColor: palette.canvasDeep },
  accent: { backgroundColor: palette.accentSoft },
  danger: { backgroundColor: palette.dangerSoft },
  success: { backgroundColor: palette.successSoft },
});
