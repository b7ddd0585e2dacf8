/**
 * Covarion's one theme module: palette, data-mark colours, type scale,
 * spacing and radii. Screens take every colour and size from here.
 *
 * Data-mark colours come from the Okabe–Ito palette (Okabe & Ito 2008,
 * "Color Universal Design"), chosen so that people with the common forms of
 * colour-vision deficiency can tell them apart; marks also differ by shape
 * wherever a colour carries meaning.
 */
export const palette = {
  ink: "#1C2B4D",
  inkSoft: "#3B4A6B",
  muted: "#5F6B80",
  faint: "#8A93A3",
  line: "#D9DEE7",
  lineStrong: "#B7C0CF",
  surface: "#FFFFFF",
  canvas: "#F4F6FA",
  canvasDeep: "#E8ECF3",
  accent: "#D68C1E",
  accentInk: "#7A4A05",
  accentSoft: "#FBEFD9",
  focus: "#2F6FD6",
  success: "#1E7A4F",
  successSoft: "#E2F3EA",
  danger: "#B3261E",
  dangerSoft: "#FBE7E5",
  warning: "#8A5A00",
  warningSoft: "#FFF4D6",
  onInk: "#FFFFFF",
} as const;

/** Okabe–Ito colours for data marks (colour-blind safe). */
export const marks = {
  black: "#000000",
  orange: "#E69F00",
  skyBlue: "#56B4E9",
  green: "#009E73",
  yellow: "#F0E442",
  blue: "#0072B2",
  vermillion: "#D55E00",
  purple: "#CC79A7",
} as const;

/** Meaning → colour for participant flags and groups in plots. */
export const markRoles = {
  participant: marks.blue,
  outlier: marks.vermillion,
  leverage: marks.orange,
  influence: marks.purple,
  setAside: "#7F7F7F",
  groupA: marks.blue,
  groupB: marks.orange,
  fit: palette.ink,
  band: "rgba(0,114,178,0.15)",
} as const;

export const fonts = {
  regular: "Inter_400Regular",
  semibold: "Inter_600SemiBold",
  bold: "Inter_700Bold",
  mono: "IBMPlexMono_400Regular",
  monoBold: "IBMPlexMono_600SemiBold",
} as const;

/** Type scale (px), a 1.2 ratio around 15. */
export const type = {
  caption: 12,
  small: 13,
  body: 15,
  lead: 17,
  title: 21,
  headline: 26,
  display: 32,
} as const;

export const space = {
  xs: 4,
  sm: 8,
  md: 12,
  lg: 16,
  xl: 24,
  xxl: 32,
  xxxl: 48,
} as const;

export const radius = { sm: 4, md: 8, lg: 12, pill: 999 } as const;

/** Width at which navigation moves from the bottom bar to a side rail. */
export const wideBreakpoint = 900;

/** Largest width of the reading column on a wide screen. */
export const contentMaxWidth = 1200;

/**
 * Plot and table sizes (px at one SVG unit per CSS pixel) and the plot
 * colours that are not data marks. Plots keep text at 11 px or more and give
 * every pressable mark a hit area of at least 24 px.
 */
export const chart = {
  tickText: 11,
  labelText: 12,
  titleText: 12,
  markRadius: 4.5,
  /** Radius of the invisible circle that takes a press (diameter ≥ 24 px). */
  hitRadius: 13,
  focusRadius: 9,
  strokeWidth: 1.5,
  /** Height of one region row in the forest plot. */
  forestRowHeight: 30,
  /** Width an SVG is laid out at before its real width is known. */
  defaultWidth: 360,
  minWidth: 280,
  maxWidth: 960,
  axis: palette.muted,
  grid: palette.line,
  zero: palette.inkSoft,
  text: palette.inkSoft,
  selectedRow: palette.accentSoft,
  focus: palette.focus,
  reference: palette.accent,
  contour: palette.muted,
  bar: palette.lineStrong,
  barExtreme: marks.skyBlue,
  observed: marks.vermillion,
  curve: marks.blue,
  estimate: palette.ink,
} as const;

/** Data table sizes: one line per row, tap-sized rows. */
export const table = {
  rowHeight: 44,
  headerHeight: 44,
  pinnedWidth: 128,
  cellWidth: 112,
  cellPaddingX: 12,
  stripe: palette.canvas,
  selected: palette.accentSoft,
  border: palette.line,
  header: palette.canvasDeep,
} as const;
