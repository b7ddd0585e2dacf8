/**
 * Types shared by the plot components: a participant's mark (id, flags,
 * set aside) and the props of the invisible press target drawn over each
 * pressable mark.
 */
import type { Flag } from "../../contract/spec";

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
  /** The hit rectangle in SVG units; a square of side 2·chart.hitRadius with rx = hitRadius is a ≥ 24-px round target. */
  x: number;
  y: number;
  width: number;
  height: number;
  /** Corner radius. */
  rx?: number;
  /** Accessible name, e.g. "sub-12: trait 31, contrast 0.42, flagged outlier". */
  label: string;
  onPress: () => void;
  /** The mark or row is the selected one: the focus ring stays drawn. */
  selected?: boolean;
  testID?: string;
}

/** A participant's mark placed in a drawing. */
export interface PlacedMark extends ParticipantMark {
  /** SVG coordinates of the mark. */
  cx: number;
  cy: number;
  /** Accessible name (see describePoint). */
  label: string;
}
