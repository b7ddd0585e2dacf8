/**
 * The participant layer shared by the scatter and strip plots and the influence view:
 * marks drawn so flagged participants sit on top of plain ones (set aside
 * first, then plain, then flagged), and, when the plot is pressable, one
 * labelled press target per participant in left-to-right order so keyboard
 * focus moves across the plot.
 */
import { G } from "react-native-svg";
import { chart } from "../theme";
import type { PlacedMark } from "./chart-types";
import { MarkShape } from "./mark-shape";
import { drawOrder, markFor } from "./marks";
import { PressTarget } from "./press-target";

export type { PlacedMark };

export interface ParticipantMarksProps {
  marks: readonly PlacedMark[];
  selectedId?: string | null;
  onPress?: (id: string) => void;
}

export function ParticipantMarks(props: ParticipantMarksProps) {
  const drawn = drawOrder(props.marks);
  const focusOrder = props.marks.slice().sort((a, b) => a.cx - b.cx || a.cy - b.cy);
  const onPress = props.onPress;
  const r = chart.hitRadius;
  return (
    <G>
      {drawn.map((m) => {
        const style = markFor(m.flags, m.setAside ?? false);
        return (
          <MarkShape
            key={m.id}
            shape={style.shape}
            cx={m.cx}
            cy={m.cy}
            colour={style.colour}
            hollow={style.hollow}
          />
        );
      })}
      {onPress
        ? focusOrder.map((m) => (
            <PressTarget
              key={`p${m.id}`}
              x={m.cx - r}
              y={m.cy - r}
              width={2 * r}
              height={2 * r}
              rx={r}
              label={m.label}
              selected={m.id === props.selectedId}
              onPress={() => onPress(m.id)}
            />
          ))
        : null}
    </G>
  );
}
