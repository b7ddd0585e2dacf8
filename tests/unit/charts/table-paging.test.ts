import { describe, expect, it } from "vitest";
import {
  clampPageIndex,
  pageCountFor,
  pageOfRow,
  pageWindow,
} from "../../../components/tables/paging";

describe("table paging", () => {
  it("labels the rows a page shows", () => {
    expect(pageWindow(2000, 0, 50)).toEqual({
      pageIndex: 0,
      pageCount: 40,
      first: 1,
      last: 50,
      label: "rows 1–50 of 2,000",
    }); // (exact arithmetic: 2000/50 = 40 pages)
    expect(pageWindow(2000, 39, 50).label).toBe("rows 1,951–2,000 of 2,000"); // (exact arithmetic: 39·50 + 1 = 1951)
    expect(pageWindow(73, 2, 25)).toEqual({
      pageIndex: 2,
      pageCount: 3,
      first: 51,
      last: 73,
      label: "rows 51–73 of 73",
    }); // (exact arithmetic: ceil(73/25) = 3, last page partial)
    expect(pageWindow(51, 2, 25).label).toBe("row 51 of 51"); // (exact arithmetic: one row on the last page)
  });

  it("clamps a page index that runs past the rows (after filtering)", () => {
    expect(pageWindow(30, 5, 25).pageIndex).toBe(1); // (exact arithmetic: 2 pages, last index 1)
    expect(clampPageIndex(-3, 30, 25)).toBe(0); // (exact arithmetic)
    expect(clampPageIndex(Number.NaN, 30, 25)).toBe(0); // (input contract)
  });

  it("has one empty page for no rows", () => {
    expect(pageWindow(0, 3, 50)).toEqual({
      pageIndex: 0,
      pageCount: 1,
      first: 0,
      last: 0,
      label: "no rows",
    }); // (product convention)
    expect(pageCountFor(0, 50)).toBe(1); // (product convention)
  });

  it("finds the page of a row and refuses page sizes below 1", () => {
    expect(pageOfRow(149, 50)).toBe(2); // (exact arithmetic: floor(149/50))
    expect(pageOfRow(150, 50)).toBe(3); // (exact arithmetic: row index 150 opens page 3)
    expect(() => pageCountFor(10, 0)).toThrow(/pageSize/); // (input contract)
  });
});
