/**
 * Types shared by the plot components: a participant's mark (id, flags,
 * set aside) and the props of the invisible press target drawn over each
 * pressable mark.
 */
import type { Flag } from "../../server/model/spec";

export type { Flag };

/** What every participant mark carries besides its coordinates. */
export interface ParticipantMark {
  /** Participant id as in the roster, e.g. "sub-12". */
  id: string;
  /** Diagnostic flags from the fit (may be empty). */
  flags: readonly Flag[];
  /** True when the participant is set aside in this fit (drawn hollow). */
  setAside?: boolean;
}

export interface PressTargetProps {
  /** Centre of the target in SVG units. */
  cx: number;
  cy: number;
  /** Hit radius in SVG units (the theme's `chart.hitRadius` gives a ≥ 24-px target). */
  r: number;
  /** Accessible name, e.g. "sub-12: trait 31, contrast 0.42, flagged outlier". */
  label: string;
  onPress: () => void;
  /** Draws the focus ring also when not focused (the mark is the selected one). */
  selected?: boolean;
  testID?: string;
}
