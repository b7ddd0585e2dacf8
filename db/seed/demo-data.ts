/**
 * The demo study's two files, invented by a seeded generator.
 *
 * Scenario (all invented): the Harbour Bay working-memory cohort, scanned at
 * the Harbour Bay Imaging Centre with a "lantern sequence" task; the
 * contrast is "lantern-3 minus lantern-1" (remembering three lit lanterns
 * against one). 72 people were enrolled, patients and controls; 71 have a
 * brain-table row and 71 a participant-sheet row:
 *
 * - brain table (wide CSV): `participant_id`, `session`, ten regions with
 *   ordinary anatomical names, each with a standard-error column (`_se`);
 *   16 participants were scanned a second time (session 2) for reliability;
 * - participant sheet (BIDS-style TSV, `n/a` for missing): group, age, sex,
 *   task accuracy, response time, symptom score (patients), head motion.
 *
 * Planted on purpose, so the product has something to show:
 * - a trait association: the prefrontal and parietal contrast rises with
 *   task accuracy (0.15 contrast units per 0.07 of accuracy in the left
 *   dorsolateral prefrontal region, less elsewhere), and patients are
 *   somewhat lower in prefrontal regions;
 * - one clear outlier: sub-23's left dorsolateral prefrontal value is far
 *   above everyone else's;
 * - one high-leverage participant: sub-41's accuracy is far below the rest,
 *   while its contrast is only as low as a participant 2.5 standard
 *   deviations below the mean would have;
 * - id mismatches: participant 07 is written `7` in the brain table (a near
 *   miss, never merged silently), sub-71 is only in the brain table and
 *   sub-72 only in the sheet; sub-15 is written `SUB-15` in the brain table,
 *   which the roster rule matches.
 *
 * Same seed → byte-identical files (numbers are printed with toFixed).
 * Cost: O(participants × regions).
 */
import { createRng, normalDraw, type Rng } from "../../server/stats/rng";

export const DEMO_SEED = 20261201;

export const demoScenario = {
  cohort: "Harbour Bay working-memory cohort",
  site: "Harbour Bay Imaging Centre",
  task: "lantern sequence task",
  contrast: "lantern-3 minus lantern-1",
  outlier: "sub-23",
  outlierRegion: "L_dlpfc",
  highLeverage: "sub-41",
  trait: "accuracy",
} as const;

/** Ten regions (ordinary anatomical names) and how each responds to the task, to accuracy and to being a patient. */
export const demoRegions: readonly {
  name: string;
  mean: number;
  accuracy: number;
  patient: number;
}[] = [
  { name: "L_dlpfc", mean: 0.55, accuracy: 0.15, patient: -0.2 },
  { name: "R_dlpfc", mean: 0.5, accuracy: 0.13, patient: -0.18 },
  { name: "L_parietal", mean: 0.7, accuracy: 0.1, patient: -0.08 },
  { name: "R_parietal", mean: 0.65, accuracy: 0.08, patient: -0.05 },
  { name: "L_insula", mean: 0.3, accuracy: 0.02, patient: 0 },
  { name: "R_insula", mean: 0.28, accuracy: 0, patient: 0 },
  { name: "dACC", mean: 0.45, accuracy: 0.05, patient: -0.05 },
  { name: "L_caudate", mean: 0.12, accuracy: 0, patient: 0.03 },
  { name: "R_caudate", mean: 0.1, accuracy: 0, patient: 0 },
  { name: "precuneus", mean: -0.2, accuracy: -0.03, patient: 0.05 },
];

export interface DemoFiles {
  brainFileName: string;
  brainCsv: string;
  sheetFileName: string;
  participantsTsv: string;
  /** Not used: second sessions are rows of the brain table (its `session` column). */
  sessionsCsv?: string;
}

export const DEMO_BRAIN_FILE = "harbour-bay_lantern-3-vs-1_brain-table.csv";
export const DEMO_SHEET_FILE = "harbour-bay_participants.tsv";

const ENROLLED = 72;
const RETESTED = 16;

/** Standard normal deviate; the demo files' sequence takes u as 1 − uniform (see normalDraw). */
function normal(rng: Rng): number {
  return normalDraw(rng, { zero: "complement" });
}

function fixed(x: number, digits: number): string {
  const s = x.toFixed(digits);
  return /^-0\.?0*$/.test(s) ? s.slice(1) : s;
}

function shuffle<T>(items: T[], rng: Rng): T[] {
  const a = [...items];
  for (let i = a.length - 1; i > 0; i--) {
    const j = rng.int(i + 1);
    [a[i], a[j]] = [a[j], a[i]];
  }
  return a;
}

interface Person {
  number: number;
  id: string;
  group: "patient" | "control";
  age: number;
  sex: "F" | "M";
  accuracy: number;
  rtMs: number;
  symptom: number | null;
  meanFd: number;
  retest: boolean;
}

/** Generates the demo brain table (CSV) and participant sheet (TSV) from `seed`. */
export function generateDemoFiles(seed: number = DEMO_SEED): DemoFiles {
  const rng = createRng(seed);
  const numbers = Array.from({ length: ENROLLED }, (_, i) => i + 1);
  const patients = new Set(shuffle(numbers, rng).slice(0, ENROLLED / 2));
  const people: Person[] = numbers.map((n) => {
    const group = patients.has(n) ? "patient" : "control";
    const accuracy = Math.min(
      0.99,
      Math.max(0.52, (group === "patient" ? 0.78 : 0.85) + 0.07 * normal(rng)),
    );
    return {
      number: n,
      id: `sub-${String(n).padStart(2, "0")}`,
      group,
      age: Math.round(Math.min(64, Math.max(19, 38 + 11 * normal(rng)))),
      sex: rng.next() < 0.52 ? "F" : "M",
      accuracy,
      rtMs: 520 + 900 * (1 - accuracy) + 60 * normal(rng),
      symptom:
        group === "patient"
          ? Math.round(Math.max(8, 24 + 7 * normal(rng)))
          : Math.round(Math.max(0, 3 + 2 * normal(rng))),
      meanFd: Math.max(0.04, 0.11 + (group === "patient" ? 0.03 : 0) + 0.04 * normal(rng)),
      retest: false,
    };
  });
  const byId = new Map(people.map((p) => [p.id, p]));
  // The high-leverage participant: accuracy far below everyone else.
  const lev = byId.get(demoScenario.highLeverage)!;
  lev.accuracy = 0.34;
  lev.rtMs = 1480;
  for (const p of shuffle(people, rng).slice(0, RETESTED)) p.retest = true;

  // Accuracy on the scale the effects are planted on (mean 0.82, one unit per 0.07), capped at ±2.5.
  const accuracyZ = (p: Person) => Math.max(-2.5, Math.min(2.5, (p.accuracy - 0.82) / 0.07));

  // Brain table: one row per participant and session.
  const header = ["participant_id", "session"];
  for (const r of demoRegions) header.push(r.name, `${r.name}_se`);
  const lines = [header.join(",")];
  for (const p of people) {
    if (p.number === 72) continue; // only in the participant sheet
    const z = accuracyZ(p);
    // Stable, person-level part of each region's contrast (the same in both sessions).
    const stable = demoRegions.map(
      (r) => r.mean + r.accuracy * z + (p.group === "patient" ? r.patient : 0) + 0.22 * normal(rng),
    );
    const brainId = p.number === 7 ? "7" : p.number === 15 ? "SUB-15" : p.id;
    for (const session of p.retest ? [1, 2] : [1]) {
      const cells = [brainId, String(session)];
      demoRegions.forEach((r, k) => {
        const se = 0.1 + 0.12 * rng.next() + 0.6 * (p.meanFd - 0.08);
        let value = stable[k] + Math.sqrt(se * se + 0.12 * 0.12) * normal(rng);
        if (p.id === demoScenario.outlier && r.name === demoScenario.outlierRegion && session === 1)
          value = 2.45;
        if (p.number === 33 && r.name === "R_caudate" && session === 1) {
          cells.push("n/a", "n/a"); // outside the acquired field of view
          return;
        }
        cells.push(fixed(value, 4), fixed(Math.max(0.05, se), 4));
      });
      lines.push(cells.join(","));
    }
  }
  const brainCsv = `${lines.join("\n")}\n`;

  // Participant sheet: BIDS-style TSV with n/a for missing.
  const sheetHeader = [
    "participant_id",
    "group",
    "age",
    "sex",
    "accuracy",
    "rt_ms",
    "symptom_score",
    "mean_fd",
  ];
  const rows = [sheetHeader.join("\t")];
  for (const p of people) {
    if (p.number === 71) continue; // only in the brain table
    rows.push(
      [
        p.id,
        p.group,
        String(p.age),
        p.sex,
        p.number === 52 ? "n/a" : fixed(p.accuracy, 3),
        p.number === 52 ? "n/a" : fixed(p.rtMs, 0),
        p.number === 60 ? "n/a" : String(p.symptom),
        fixed(p.meanFd, 3),
      ].join("\t"),
    );
  }
  const participantsTsv = `${rows.join("\n")}\n`;
  return {
    brainFileName: DEMO_BRAIN_FILE,
    brainCsv,
    sheetFileName: DEMO_SHEET_FILE,
    participantsTsv,
  };
}
