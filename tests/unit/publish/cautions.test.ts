/**
 * The cautions shared by the screens and the methods paragraph: the
 * small-sample threshold (fewer than 20 participants in a region; common
 * practice, no source; Marek et al. 2022, Nature 603:654–660, show how small
 * samples inflate brain–trait associations) and the texts the fit screen
 * shows. Region names and counts are invented.
 */
import { describe, expect, it } from "vitest";
import {
  SMALL_SAMPLE_N,
  circularityCaution,
  circularityPaperCaution,
  individualCaution,
  isSmallSample,
  regionSmallSampleCaution,
  smallSampleCaution,
  smallSamplePaperCaution,
  smallSampleRegions,
} from "../../../contract/cautions";
import { circularityCaution as modelFormCircularityCaution } from "../../../contract/model-form";
import { methodReferences } from "../../../contract/methods-text";

describe("small-sample caution", () => {
  it("applies below 20 participants, not at 20 (common practice, no source)", () => {
    expect(SMALL_SAMPLE_N).toBe(20);
    expect(isSmallSample(19)).toBe(true);
    expect(isSmallSample(20)).toBe(false);
    expect(
      smallSampleRegions([
        { region: "a", n: 19 },
        { region: "b", n: 20 },
        { region: "c", n: 3 },
      ]).map((r) => r.region),
    ).toEqual(["a", "c"]);
  });

  it("the fit screen's caution names the small regions with their N, and is null when none is small", () => {
    expect(smallSampleCaution([{ region: "L_insula", n: 20 }])).toBeNull();
    const one = smallSampleCaution([{ region: "L_insula", n: 14 }]);
    expect(one).toEqual({
      title: "Small sample",
      text: expect.stringMatching(
        /^Fewer than 20 participants in this region \(N = 14\): .*\(Marek et al\. 2022\)\. Read the confidence interval, not only p\.$/,
      ),
      regions: [{ region: "L_insula", n: 14 }],
    });
    const some = smallSampleCaution([
      { region: "L_insula", n: 14 },
      { region: "R_insula", n: 40 },
      { region: "L_dlpfc", n: 19 },
    ]);
    expect(some?.text).toContain(
      "Fewer than 20 participants in 2 of 3 regions (L_insula, N = 14; L_dlpfc, N = 19):",
    );
    expect(some?.regions).toEqual([
      { region: "L_insula", n: 14 },
      { region: "L_dlpfc", n: 19 },
    ]);
    const many = smallSampleCaution(
      Array.from({ length: 8 }, (_, i) => ({ region: `r${i + 1}`, n: 10 })),
    );
    expect(many?.text).toContain(
      "in 8 of 8 regions (r1, N = 10; r2, N = 10; r3, N = 10; r4, N = 10; r5, N = 10; and 3 more):",
    );
    expect(many?.regions).toHaveLength(8);
  });

  it("the region detail's caution for one N", () => {
    expect(regionSmallSampleCaution(20)).toBeNull();
    expect(regionSmallSampleCaution(7)).toMatch(/^Fewer than 20 participants \(N = 7\): /);
  });

  it("screen and paper share the reason and the reference", () => {
    const screen = regionSmallSampleCaution(7) ?? "";
    const paper = smallSamplePaperCaution([7])?.text ?? "";
    const reason = screen.slice(screen.indexOf(": ") + 2, screen.indexOf(". Read"));
    expect(reason).toContain("(Marek et al. 2022)");
    expect(paper).toContain(reason);
    expect(smallSamplePaperCaution([7])?.references).toEqual(["Marek et al. 2022"]);
    expect(smallSamplePaperCaution([20, 25])).toBeNull();
  });
});

describe("other cautions", () => {
  it("the individual caution shown next to one participant's values", () => {
    expect(individualCaution).toBe("Not a basis for decisions about this individual.");
  });

  it("circularity: the model form's text is the shared one; the paper's cites references that exist", () => {
    expect(modelFormCircularityCaution).toBe(circularityCaution);
    for (const key of circularityPaperCaution.references)
      expect(methodReferences[key]).toBeDefined();
    expect(circularityPaperCaution.text).toContain("(Vul et al. 2009; Kriegeskorte et al. 2009)");
  });
});
