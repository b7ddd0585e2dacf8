import { describe, expect, it } from "vitest";
import {
  cellPadding,
  columnWidth,
  isNarrowBox,
  nextScrollX,
  overflowState,
} from "../../../components/tables/table-fit";
import { space, table } from "../../../components/theme";

describe("how the data table fits its box", () => {
  it("counts a phone's box as narrow, a wide screen's and an unmeasured box as not", () => {
    expect(isNarrowBox(358)).toBe(true);
    expect(isNarrowBox(599)).toBe(true);
    expect(isNarrowBox(600)).toBe(false);
    expect(isNarrowBox(976)).toBe(false);
    expect(isNarrowBox(0)).toBe(false);
    expect(cellPadding(true)).toBe(space.xs);
    expect(cellPadding(false)).toBe(table.cellPaddingX);
  });

  it("takes a column's narrow width only in a narrow box, and the theme's defaults otherwise", () => {
    expect(columnWidth(2, { width: 96, narrowWidth: 60 }, true)).toBe(60);
    expect(columnWidth(2, { width: 96, narrowWidth: 60 }, false)).toBe(96);
    expect(columnWidth(2, { width: 96 }, true)).toBe(96);
    expect(columnWidth(0, undefined, false)).toBe(table.pinnedWidth);
    expect(columnWidth(3, {}, true)).toBe(table.cellWidth);
  });

  it("reports overflow only when the columns are wider than the box, and where the scroll stands", () => {
    expect(overflowState(358, 358, 0)).toEqual({ overflow: false, atEnd: true, atStart: true });
    // a pixel of rounding is not overflow
    expect(overflowState(358, 359, 0).overflow).toBe(false);
    expect(overflowState(358, 830, 0)).toEqual({ overflow: true, atEnd: false, atStart: true });
    expect(overflowState(358, 830, 200)).toEqual({ overflow: true, atEnd: false, atStart: false });
    expect(overflowState(358, 830, 472)).toEqual({ overflow: true, atEnd: true, atStart: false });
    // before the box is measured nothing overflows
    expect(overflowState(0, 830, 0).overflow).toBe(false);
  });

  it("scrolls most of a box further per press, stops at the end, and goes back to the start from there", () => {
    expect(nextScrollX(358, 830, 0)).toBeCloseTo(358 * 0.7);
    expect(nextScrollX(358, 830, 300)).toBe(830 - 358);
    expect(nextScrollX(358, 830, 472)).toBe(0);
  });
});
