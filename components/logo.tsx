import { View } from "react-native";
import Svg, { Circle } from "react-native-svg";
import { Txt } from "./ui";
import { fonts, palette } from "./theme";

/** The Covarion mark: two overlapping rings — two measures that vary together. */
export function LogoMark(props: { size?: number }) {
  const size = props.size ?? 28;
  return (
    <Svg width={size} height={size} viewBox="0 0 48 48" accessibilityLabel="Covarion logo">
      <Circle cx={19} cy={24} r={12} stroke={palette.ink} strokeWidth={5} fill="none" />
      <Circle cx={29} cy={24} r={12} stroke={palette.accent} strokeWidth={5} fill="none" />
    </Svg>
  );
}

export function Wordmark(props: { size?: number; inverse?: boolean }) {
  const size = props.size ?? 20;
  return (
    <View style={{ flexDirection: "row", alignItems: "center", gap: 8 }}>
      <LogoMark size={size * 1.4} />
      <Txt
        style={{
          fontFamily: fonts.bold,
          fontSize: size,
          letterSpacing: -0.3,
          color: props.inverse ? palette.onInk : palette.ink,
        }}
      >
        Covarion
      </Txt>
    </View>
  );
}
