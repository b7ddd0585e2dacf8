/**
 * Measurement-aware recipes through the recipe command: fits weighted by
 * first-level standard errors, and reliability across sessions.
 *
 * Published cases are written out as brain tables:
 * - the BCG vaccine trials (Colditz et al. 1994, JAMA 271:698–702), each trial a
 *   "participant" with its log risk ratio and standard error in one region;
 *   reference values from Viechtbauer (2010, J Stat Softw 36(3));
 * - the Shrout & Fleiss (1979, Psychological Bulletin 86:420–428) 6 × 4 table,
 *   each judge a session.
 *
 * A few runs are spawned as a lab pipeline would run them (in beforeAll, a
 * couple at a time: the machine has two cores); the others call the same
 * `runRecipe` the command calls, in this process.
 */
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { dirname, join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { runRecipe } from "../../../server/cli/recipe";
import { IntakeError } from "../../../server/intake";
import { StatsError } from "../../../server/stats/errors";
import { runRecipeCommand, type CommandRun } from "../../support/recipe-command";
import { BCG, SHROUT_FLEISS } from "../stats/reference-data";

const dir = mkdtempSync(join(tmpdir(), "covarion-measurement-"));

/** The recipe command, directly or through npm. */
function run(args: string[], viaNpm = false): Promise<CommandRun> {
  return runRecipeCommand(args, { viaNpm });
}

function file(name: string, content: string): string {
  const path = join(dir, name);
  mkdirSync(dirname(path), { recursive: true });
  writeFileSync(path, content);
  return path;
}

function recipe(name: string, body: unknown): string {
  return file(name, JSON.stringify(body));
}

/** Log risk ratio and its large-sample sampling variance per trial. */
const yi = BCG.map(([a, b, c, d]) => Math.log(a / (a + b) / (c / (c + d))));
const vi = BCG.map(([a, b, c, d]) => 1 / a - 1 / (a + b) + 1 / c - 1 / (c + d));
const trialIds = BCG.map((_, i) => `trial-${String(i + 1).padStart(2, "0")}`);
const k = BCG.length;

/** Numbers are written with JavaScript's shortest round-trip form, so the command reads back exactly these doubles. */
const BCG_WIDE = `participant_id,log_rr,log_rr_se\n${trialIds.map((id, i) => `${id},${yi[i]},${Math.sqrt(vi[i])}`).join("\n")}\n`;
const BCG_LONG = `participant_id,region,value,se\n${trialIds.map((id, i) => `${id},log_rr,${yi[i]},${Math.sqrt(vi[i])}`).join("\n")}\n`;
const BCG_SHEET = `participant_id\tlatitude\n${trialIds.map((id, i) => `${id}\t${BCG[i][4]}`).join("\n")}\n`;

const SF_LONG = `participant_id,session,region,value\n${SHROUT_FLEISS.flatMap((row, i) => row.map((v, s) => `p${i + 1},ses-${s + 1},rating,${v}`)).join("\n")}\n`;
/** Wide with a session column: one row per participant and session, sessions interleaved out of order on purpose. */
const SF_WIDE = `participant_id,session,rating,rating_copy\n${[3, 1, 0, 2]
  .flatMap((s) =>
    SHROUT_FLEISS.map((row, i) => `p${i + 1},ses-${s + 1},${row[s]},${row[s] * 2 + 1}`),
  )
  .join("\n")}\n`;

/** Intercept-only weighted mean and Q with weights 1/(v + τ²), written out independently of the engine. */
function pooled(tau2: number) {
  const w = vi.map((v) => 1 / (v + tau2));
  const sw = w.reduce((s, x) => s + x, 0);
  const mu = w.reduce((s, x, i) => s + x * yi[i], 0) / sw;
  const q = w.reduce((s, x, i) => s + x * (yi[i] - mu) ** 2, 0);
  return { w, sw, mu, q };
}

const spawned = new Map<string, CommandRun>();
const spawnCases: Record<string, { args: () => string[]; viaNpm?: boolean }> = {
  dl: {
    args: () => [
      recipe("bcg-dl.json", {
        brainTable: "bcg.csv",
        kind: "one-sample",
        weights: "first-level-se",
        tau2Method: "dl",
      }),
    ],
    viaNpm: true,
  },
  reml: {
    args: () => [
      recipe("bcg-reml.json", {
        brainTable: "bcg.csv",
        kind: "one-sample",
        weights: "first-level-se",
        tau2Method: "reml",
      }),
    ],
  },
  reliability: {
    args: () => [
      recipe("sf-long.json", { brainTable: "shrout-fleiss-long.csv", kind: "reliability" }),
    ],
    viaNpm: true,
  },
  missingSe: {
    args: () => {
      file("bcg-missing-se.csv", BCG_WIDE.replace(/^(trial-04,[^,]+),[^\n]+$/m, "$1,n/a"));
      return [
        recipe("bcg-missing-se.json", {
          brainTable: "bcg-missing-se.csv",
          kind: "one-sample",
          weights: "first-level-se",
        }),
      ];
    },
  },
};

beforeAll(async () => {
  file("bcg.csv", BCG_WIDE);
  file("bcg-long.csv", BCG_LONG);
  file("bcg-latitude.tsv", BCG_SHEET);
  file("shrout-fleiss-long.csv", SF_LONG);
  file("shrout-fleiss-wide.csv", SF_WIDE);
  const names = Object.keys(spawnCases);
  const args = names.map((n) => spawnCases[n].args());
  let next = 0;
  const worker = async () => {
    while (next < names.length) {
      const i = next++;
      spawned.set(names[i], await run(args[i], spawnCases[names[i]].viaNpm ?? false));
    }
  };
  await Promise.all([worker(), worker()]);
}, 240_000);

afterAll(() => rmSync(dir, { recursive: true, force: true }));

function output(name: string) {
  const r = spawned.get(name)!;
  expect(r.code, r.stderr).toBe(0);
  expect(r.stderr).toBe("");
  return JSON.parse(r.stdout);
}

/** Runs a recipe in this process and returns the one-line message the command would print for bad input. */
async function refusal(name: string, body: unknown): Promise<string> {
  const path = recipe(name, body);
  try {
    await runRecipe(path);
  } catch (e) {
    if (e instanceof IntakeError || e instanceof StatsError) return e.message;
    throw e;
  }
  throw new Error(`${name}: the recipe was accepted`);
}

describe("recipe command: BCG trials as a brain table, weighted by first-level standard errors", () => {
  it("DerSimonian–Laird (through npm run --silent fit)", () => {
    const out = output("dl");
    expect(out.regions).toHaveLength(1);
    const r = out.regions[0];
    expect(r.region).toBe("log_rr");
    expect(r.n).toBe(13);
    expect(r.tau2).toBeCloseTo(0.3088, 4); // (Viechtbauer 2010, J Stat Softw 36(3), DL fit of the BCG data)
    expect(r.estimate).toBeCloseTo(-0.7141, 4); // (Viechtbauer 2010, DL fit)
    expect(r.se).toBeCloseTo(0.1787, 4); // (Viechtbauer 2010, DL fit)
    expect(r.df).toBeNull(); // (normal reference without Knapp–Hartung, Viechtbauer 2010)
    // (exact algebra: DerSimonian & Laird 1986, τ² = (Q − (k − 1)) / (S1 − S2/S1) with fixed-effect weights 1/v)
    const fixed = pooled(0);
    const s2 = fixed.w.reduce((s, x) => s + x * x, 0);
    const tau2 = (fixed.q - (k - 1)) / (fixed.sw - s2 / fixed.sw);
    expect(r.tau2).toBeCloseTo(tau2, 10);
    // (exact algebra: random-effects mean and its se with weights 1/(v + τ²); z = estimate/se; 95% interval ±1.959964·se)
    const re = pooled(tau2);
    expect(r.estimate).toBeCloseTo(re.mu, 10);
    expect(r.se).toBeCloseTo(Math.sqrt(1 / re.sw), 10);
    expect(r.statistic).toBeCloseTo(re.mu / Math.sqrt(1 / re.sw), 8);
    expect(r.ciLow).toBeCloseTo(re.mu - 1.959963985 * Math.sqrt(1 / re.sw), 8);
    expect(r.ciHigh).toBeCloseTo(re.mu + 1.959963985 * Math.sqrt(1 / re.sw), 8);
    // (exact algebra: with DL, I² = (Q − df)/Q, Higgins & Thompson 2002); 92.12% (Viechtbauer 2010, DL fit)
    expect(r.i2).toBeCloseTo((fixed.q - (k - 1)) / fixed.q, 10);
    expect(r.i2).toBeCloseTo(0.9212, 4);
    // (exact algebra: noise share = mean(v)/(mean(v) + τ²); the two shares add to 1)
    const meanV = vi.reduce((s, v) => s + v, 0) / k;
    expect(r.noiseShare).toBeCloseTo(meanV / (meanV + tau2), 10);
    expect(r.trueShare).toBeCloseTo(tau2 / (meanV + tau2), 10);
    expect(typeof r.tau2Se).toBe("number");
    expect(r.method).toMatch(/DerSimonian–Laird/);
    expect(
      out.notes.some((n: string) =>
        n.startsWith("Weights: each participant counts with 1/(se² + τ²)"),
      ),
    ).toBe(true);
    // A leave-one-out range of the unweighted mean would not describe the weighted estimate.
    expect(r.leaveOneOut).toBeUndefined();
    expect(out.recipe).toMatchObject({
      weights: "first-level-se",
      tau2Method: "dl",
      smallSample: "none",
    });
  });

  it("REML", () => {
    const r = output("reml").regions[0];
    expect(r.tau2).toBeCloseTo(0.3132, 4); // (Viechtbauer 2010, J Stat Softw 36(3), REML fit of the BCG data)
    expect(r.estimate).toBeCloseTo(-0.7145, 4); // (Viechtbauer 2010, REML fit)
    expect(r.se).toBeCloseTo(0.1798, 4); // (Viechtbauer 2010, REML fit)
    expect(r.ciLow).toBeCloseTo(-1.0669, 4); // (value from memory: documented ci.lb = −1.0669)
    expect(r.ciHigh).toBeCloseTo(-0.3622, 4); // (value from memory: documented ci.ub = −0.3622)
    expect(r.i2).toBeCloseTo(0.9222, 4); // (value from memory: documented I² = 92.22% for the REML fit)
    expect(r.tau2Se).toBeCloseTo(0.1664, 4); // (value from memory: documented SE of τ² = 0.1664)
    // (exact algebra: at an interior REML solution y'PPy = tr P, Viechtbauer 2005, for the intercept-only model)
    const { w, sw, mu } = pooled(r.tau2);
    const yPPy = w.reduce((s, x, i) => s + (x * (yi[i] - mu)) ** 2, 0);
    const traceP = sw - w.reduce((s, x) => s + x * x, 0) / sw;
    expect(yPPy / traceP).toBeCloseTo(1, 8);
    expect(r.method).toMatch(/REML/);
  });

  it("REML with the Knapp–Hartung adjustment, from a long brain table", async () => {
    const out = await runRecipe(
      recipe("bcg-kh.json", {
        brainTable: "bcg-long.csv",
        kind: "one-sample",
        weights: "first-level-se",
        smallSample: "knapp-hartung",
      }),
    );
    const r = out.regions[0];
    expect(r.tau2).toBeCloseTo(0.3132, 4); // (Viechtbauer 2010, REML fit; the default τ² method is REML)
    expect(r.estimate).toBeCloseTo(-0.7145, 4); // (Viechtbauer 2010, REML fit; Knapp–Hartung does not move the estimate)
    expect(r.df).toBe(12); // (exact algebra: k − p = 13 − 1)
    // (exact algebra: Knapp & Hartung 2003, se² = Σw(y − μ)² / ((k − 1) Σw) at the REML τ²)
    const { sw, q } = pooled(r.tau2 as number);
    expect(r.se).toBeCloseTo(Math.sqrt(q / (k - 1) / sw), 10);
    // (Student t table: t_{.975, 12} = 2.179, Zar 2010, Table B.3)
    expect((r.ciHigh as number) - r.estimate).toBeCloseTo(2.179 * (r.se as number), 3);
    expect(r.method).toMatch(/Knapp–Hartung/);
  });

  it("wide and long layouts give the same numbers", async () => {
    const wide = await runRecipe(
      recipe("bcg-wide-reml.json", {
        brainTable: "bcg.csv",
        kind: "one-sample",
        weights: "first-level-se",
      }),
    );
    const long = await runRecipe(
      recipe("bcg-long-reml.json", {
        brainTable: "bcg-long.csv",
        kind: "one-sample",
        weights: "first-level-se",
      }),
    );
    const pick = (r: Record<string, unknown>) => [
      r.estimate,
      r.se,
      r.tau2,
      r.tau2Se,
      r.i2,
      r.noiseShare,
      r.p,
    ];
    expect(pick(long.regions[0])).toEqual(pick(wide.regions[0]));
    // (the spawned command and the in-process run read the same file)
    expect(wide.regions[0].estimate).toBe(output("reml").regions[0].estimate);
  });

  it("an association weighted by standard errors is the REML meta-regression on latitude", async () => {
    const out = await runRecipe(
      recipe("bcg-latitude.json", {
        brainTable: "bcg.csv",
        participantSheet: "bcg-latitude.tsv",
        kind: "association",
        predictor: "latitude",
        weights: "first-level-se",
      }),
    );
    const r = out.regions[0];
    expect(r.n).toBe(13);
    expect(r.estimate).toBeCloseTo(-0.0291, 4); // (Viechtbauer 2010, mixed-effects model with absolute latitude)
    expect(r.se).toBeCloseTo(0.0072, 4); // (value from memory: documented se of the latitude coefficient)
    // (Viechtbauer 2010: residual heterogeneity 0.0764; our tighter convergence gives 0.07635, see the engine's test)
    expect(Math.abs((r.tau2 as number) - 0.0764)).toBeLessThan(1e-4);
    expect(r.i2).toBeCloseTo(0.6839, 4); // (value from memory: documented residual I² = 68.39%)
  });
});

describe("recipe command: participants without a usable standard error are refused, never dropped", () => {
  it("a missing standard error: exit 2, one line naming file, row, column and participant", () => {
    const r = spawned.get("missingSe")!;
    expect(r.code, r.stderr).toBe(2);
    expect(r.stdout).toBe("");
    expect(r.stderr).toBe(
      'bcg-missing-se.csv row 5, column log_rr_se: participant "trial-04" has a value in region "log_rr" but no standard error; weights "first-level-se" need one for every participant with a value (fill it in, or set the participant aside)\n',
    );
  });

  it("in a long table the row of that region is named, with the session", async () => {
    const text =
      "participant_id,session,region,value,se\nA,1,r1,1,0.1\nA,2,r1,1.2,0.1\nB,1,r1,2,0.2\nB,1,r2,2,\nB,2,r1,2.1,0.2\nC,1,r1,0.5,0.1\n";
    file("long-missing.csv", text);
    const message = await refusal("long-missing.json", {
      brainTable: "long-missing.csv",
      kind: "one-sample",
      weights: "first-level-se",
    });
    expect(message).toBe(
      'long-missing.csv row 5, column se: participant "B" in session "1" has a value in region "r2" but no standard error; weights "first-level-se" need one for every participant with a value (fill it in, or set the participant aside)',
    );
    // Session 2 has every standard error it needs (C has no session-2 row, so no value there).
    const ok = await runRecipe(
      recipe("long-ses2.json", {
        brainTable: "long-missing.csv",
        kind: "one-sample",
        weights: "first-level-se",
        session: "2",
        regions: ["r1"],
      }),
    );
    expect(ok.regions[0].n).toBe(2);
  });

  it("every such participant is listed, not only the first", async () => {
    file("bcg-two-missing.csv", BCG_WIDE.replace(/^(trial-0[27],[^,]+),[^\n]+$/gm, "$1,"));
    const message = await refusal("bcg-two-missing.json", {
      brainTable: "bcg-two-missing.csv",
      kind: "one-sample",
      weights: "first-level-se",
    });
    expect(message).toMatch(
      /^bcg-two-missing\.csv row 3, column log_rr_se: participant "trial-02" .* \(and 1 more problem\)$/,
    );
  });

  it("a participant set aside needs no standard error", async () => {
    file("bcg-aside.csv", BCG_WIDE.replace(/^(trial-04,[^,]+),[^\n]+$/m, "$1,n/a"));
    const out = await runRecipe(
      recipe("bcg-aside.json", {
        brainTable: "bcg-aside.csv",
        kind: "one-sample",
        weights: "first-level-se",
        setAside: [
          { participant: "trial-04", reason: "standard error not reported by the first-level run" },
        ],
      }),
    );
    expect(out.regions[0].n).toBe(12);
  });

  it("a zero or negative standard error is refused when the table is read, naming row and column", async () => {
    file("bcg-zero.csv", BCG_WIDE.replace(/^(trial-09,[^,]+),[^\n]+$/m, "$1,0"));
    expect(
      await refusal("bcg-zero.json", {
        brainTable: "bcg-zero.csv",
        kind: "one-sample",
        weights: "first-level-se",
      }),
    ).toBe(
      'bcg-zero.csv row 10, column log_rr_se: "0" is not a valid standard error; expected a number greater than 0',
    );
    file("bcg-negative.csv", BCG_LONG.replace(/^(trial-11,log_rr,[^,]+),[^\n]+$/m, "$1,-0.2"));
    expect(
      await refusal("bcg-negative.json", {
        brainTable: "bcg-negative.csv",
        kind: "one-sample",
        weights: "first-level-se",
      }),
    ).toBe(
      'bcg-negative.csv row 12, column se: "-0.2" is not a valid standard error; expected a number greater than 0',
    );
  });

  it("a region without a standard-error column is refused, naming the column expected", async () => {
    expect(
      await refusal("no-se.json", {
        brainTable: "shrout-fleiss-long.csv",
        kind: "one-sample",
        weights: "first-level-se",
      }),
    ).toBe(
      'shrout-fleiss-long.csv row 1: no standard-error column for region "rating"; weights "first-level-se" need one (expected a column named "se")',
    );
  });
});

describe("recipe command: reliability of the Shrout & Fleiss table as four sessions", () => {
  const table4 = {
    icc11: 0.17, // (Shrout & Fleiss 1979, Table 4: ICC(1,1) = .17)
    icc21: 0.29, // (Shrout & Fleiss 1979, Table 4: ICC(2,1) = .29)
    icc31: 0.71, // (Shrout & Fleiss 1979, Table 4: ICC(3,1) = .71)
    icc1k: 0.44, // (Shrout & Fleiss 1979, Table 4: ICC(1,4) = .44)
    icc2k: 0.62, // (Shrout & Fleiss 1979, Table 4: ICC(2,4) = .62)
    icc3k: 0.91, // (Shrout & Fleiss 1979, Table 4: ICC(3,4) = .91)
  } as const;

  it("long layout (through npm run --silent fit): the six published coefficients with intervals", () => {
    const out = output("reliability");
    expect(out.kind).toBe("reliability");
    expect(out.participants).toEqual([]);
    const r = out.regions[0];
    expect(r.region).toBe("rating");
    expect(r.sessions).toBe(4);
    expect(r.n).toBe(6);
    for (const [key, value] of Object.entries(table4)) {
      expect(r[key].value, key).toBeCloseTo(value, 2);
      expect(r[key].ciLow, key).toBeLessThan(r[key].value);
      expect(r[key].ciHigh, key).toBeGreaterThan(r[key].value);
    }
    // (value from memory: a general-purpose environment's documented ICC output for these data prints these bounds)
    expect(r.icc21.ciLow).toBeCloseTo(0.019, 3);
    expect(r.icc31.ciLow).toBeCloseTo(0.342, 3);
    expect(r.icc31.ciHigh).toBeCloseTo(0.95, 2);
    // (exact algebra: ICC(3,1) = (BMS − EMS)/(BMS + (k − 1)EMS) with BMS = 11.24, EMS = 1.02 of Shrout & Fleiss 1979, Table 3)
    const n = 6;
    const sessions = 4;
    const grand = SHROUT_FLEISS.flat().reduce((s, x) => s + x, 0) / (n * sessions);
    const rowMeans = SHROUT_FLEISS.map((row) => row.reduce((s, x) => s + x, 0) / sessions);
    const colMeans = [0, 1, 2, 3].map((j) => SHROUT_FLEISS.reduce((s, row) => s + row[j], 0) / n);
    const bms = (sessions * rowMeans.reduce((s, m) => s + (m - grand) ** 2, 0)) / (n - 1);
    const ems =
      SHROUT_FLEISS.reduce(
        (s, row, i) =>
          s + row.reduce((t, x, j) => t + (x - rowMeans[i] - colMeans[j] + grand) ** 2, 0),
        0,
      ) /
      ((n - 1) * (sessions - 1));
    expect(bms).toBeCloseTo(11.24, 2); // (Shrout & Fleiss 1979, Table 3: BMS = 11.24)
    expect(ems).toBeCloseTo(1.02, 2); // (Shrout & Fleiss 1979, Table 3: EMS = 1.02)
    expect(r.icc31.value).toBeCloseTo((bms - ems) / (bms + (sessions - 1) * ems), 12);
    expect(r.icc31.f).toBeCloseTo(bms / ems, 10);
    // The fit's estimate is ICC(2,1).
    expect(r.estimate).toBe(r.icc21.value);
    expect(r.ciLow).toBe(r.icc21.ciLow);
  });

  it("a wide table with a session column gives the same numbers, and a second region scaled by 2 the same ICCs", async () => {
    const out = await runRecipe(
      recipe("sf-wide.json", { brainTable: "shrout-fleiss-wide.csv", kind: "reliability" }),
    );
    const long = output("reliability").regions[0];
    const [rating, copy] = out.regions;
    expect(rating.sessions).toBe(4);
    for (const key of Object.keys(table4)) {
      expect(rating[key], key).toEqual(long[key]);
      // (exact algebra: intraclass correlations are unchanged by a linear rescaling a + b·x, b > 0)
      expect((copy[key] as { value: number }).value, key).toBeCloseTo(
        (long[key] as { value: number }).value,
        12,
      );
    }
    expect(out.recipe.kind).toBe("reliability");
  });

  it("a table without sessions, or with one session, is refused", async () => {
    expect(
      await refusal("rel-no-session.json", { brainTable: "bcg.csv", kind: "reliability" }),
    ).toBe(
      "kind: reliability needs a brain table with at least two sessions; the brain table has no session column",
    );
    file("one-session.csv", "participant_id,session,rating\np1,a,1\np2,a,2\np3,a,4\n");
    expect(
      await refusal("rel-one-session.json", { brainTable: "one-session.csv", kind: "reliability" }),
    ).toBe(
      "kind: reliability needs a brain table with at least two sessions; the brain table has one session",
    );
  });
});
