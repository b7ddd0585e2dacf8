/**
 * A brain-table version's number columns in binary form (`dataset_columns`,
 * migration 0017): stored with the version, one per slot; a fit loads its
 * values from them; a version stored before the migration (rows only, its
 * numbers as text) still loads and fits with the very same numbers; the
 * columns of a complete version cannot change, and an incomplete version's
 * are removed with it. Runs on the embedded database and, in the `api-pg`
 * project, on a PostgreSQL server.
 */
import { randomUUID } from "node:crypto";
import { and, eq, sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { modelSpecSchema } from "../../contract/spec";
import type { Database } from "../../db/client";
import { generateDemoFiles } from "../../db/seed/demo-data";
import {
  type DatasetVersion,
  datasetColumns,
  datasetRows,
  datasetVersions,
  studies,
} from "../../db/schema";
import { type BrainTable, buildBrainTable, buildFitData, readTable } from "../../server/intake";
import {
  columnFromBase64,
  columnToBase64,
  forEachColumn,
  hasColumns,
  storeColumns,
} from "../../server/services/dataset-columns";
import {
  loadBrainTable,
  loadParticipantSheet,
  removeIncompleteVersions,
  storeVersion,
} from "../../server/services/datasets";
import { runFit } from "../../server/stats/run-fit";
import { type TestApp, createTestApp, userIdOf } from "./helpers";

let t: TestApp;
let ownerId: string;
const demo = generateDemoFiles();
const demoBrain = Buffer.from(demo.brainCsv);
const demoSheet = Buffer.from(demo.participantsTsv);

beforeAll(async () => {
  t = await createTestApp();
  ownerId = await userIdOf(t.db, "owner@demo.covarion.test");
}, 60_000);
afterAll(async () => {
  await t?.close();
});

async function newStudy(): Promise<string> {
  const [study] = await t.db
    .insert(studies)
    .values({ name: `Binary columns ${randomUUID()}`, createdBy: ownerId })
    .returning();
  return study.id;
}

async function store(
  studyId: string,
  kind: "brain" | "participants",
  bytes: Uint8Array,
  fileName: string,
): Promise<DatasetVersion> {
  const now = new Date();
  const view = await storeVersion(t.db, {
    id: randomUUID(),
    studyId,
    kind,
    fileName,
    bytes,
    confirmation: {},
    uploadedBy: ownerId,
    uploadedAt: now,
    confirmedBy: ownerId,
    now,
  });
  const [v] = await t.db.select().from(datasetVersions).where(eq(datasetVersions.id, view.id));
  return v;
}

/**
 * The same version as one stored before migration 0017 holds it: a version
 * with the same description and a copy of its rows (numbers as text), and
 * no binary columns.
 */
async function storedAsBefore(db: Database, v: DatasetVersion): Promise<DatasetVersion> {
  const id = randomUUID();
  await db.insert(datasetVersions).values({ ...v, id, version: v.version + 1, complete: false });
  await db.execute(sql`
    insert into dataset_rows (dataset_id, position, source_row, participant_id, session, numbers, categories)
    select ${id}, position, source_row, participant_id, session, numbers, categories
    from dataset_rows where dataset_id = ${v.id}`);
  await db.update(datasetVersions).set({ complete: true }).where(eq(datasetVersions.id, id));
  const [copy] = await db.select().from(datasetVersions).where(eq(datasetVersions.id, id));
  return copy;
}

/** A table's numbers in a form where -0 differs from 0 and NaN equals NaN. */
function numbersOf(b: BrainTable) {
  return {
    entries: b.entries,
    regions: b.regions,
    values: b.values.map((v) => Array.from(v)),
    standardErrors: b.standardErrors.map((v) => (v === null ? null : Array.from(v))),
  };
}

/** A wide table whose cells test the binary form's edges: missing markers, -0, a subnormal, long decimals. */
const edgeCsv = Buffer.from(
  [
    "participant_id,amygdala,amygdala_se,insula,precuneus",
    "sub-01,0.1,0.02,-0,1e-310",
    "sub-02,NA,0.03,123456789.123456789,-2.5e-8",
    "sub-03,-1.75, ,0.30000000000000004,",
    "sub-04,7,0.5,-3,4",
    "sub-05,2.2250738585072014e-308,0.25,1.7976931348623157e308,0",
  ].join("\n"),
);

/** A long table (region and value columns, standard errors, a session), with a region missing for one entry. */
const longCsv = Buffer.from(
  [
    "participant_id,session,region,value,se",
    "s1,1,amygdala,0.5,0.1",
    "s1,1,insula,-0.25,0.2",
    "s1,2,amygdala,0.75,0.15",
    "s2,1,amygdala,n/a,n/a",
    "s2,1,insula,1e-3,0.3",
    "s3,1,insula,2.5,0.05",
  ].join("\n"),
);

describe("binary number columns of a brain-table version", () => {
  it("are stored with the version, one per number slot, and give exactly the file's numbers", async () => {
    const studyId = await newStudy();
    const v = await store(studyId, "brain", edgeCsv, "edges.csv");
    const slots = v.columns.filter((c) => c.type === "number").map((c) => c.slot);
    const stored = await t.db
      .select({ slot: datasetColumns.slot })
      .from(datasetColumns)
      .where(eq(datasetColumns.datasetId, v.id));
    expect(stored.map((s) => s.slot).sort()).toEqual(slots);
    expect(await hasColumns(t.db, v.id)).toBe(true);

    const loaded = await loadBrainTable(t.db, v);
    const direct = buildBrainTable(readTable(edgeCsv, "edges.csv"));
    expect(numbersOf(loaded).values).toEqual(numbersOf(direct).values);
    expect(numbersOf(loaded).standardErrors).toEqual(numbersOf(direct).standardErrors);
    // A plain select of the column gives the same base64 on either driver.
    const [raw] = await t.db
      .select({ values: datasetColumns.values })
      .from(datasetColumns)
      .where(and(eq(datasetColumns.datasetId, v.id), eq(datasetColumns.slot, 0)));
    expect(raw.values).toBe(columnToBase64(direct.values[0]));
    expect(Object.is(loaded.values[1][0], -0)).toBe(true);
    expect(loaded.values[2][0]).toBe(1e-310);
    expect(Number.isNaN(loaded.values[0][1])).toBe(true);
    expect(Number.isNaN((loaded.standardErrors[0] as Float64Array)[2])).toBe(true);
    expect(loaded.entries.map((e) => [e.id, e.row])).toEqual([
      ["sub-01", 2],
      ["sub-02", 3],
      ["sub-03", 4],
      ["sub-04", 5],
      ["sub-05", 6],
    ]);
  });

  it("a version stored before them (numbers as text only) loads the same numbers", async () => {
    const studyId = await newStudy();
    for (const [bytes, name] of [
      [edgeCsv, "edges.csv"],
      [demoBrain, demo.brainFileName],
      [longCsv, "long.csv"],
    ] as const) {
      const v = await store(studyId, "brain", bytes, name);
      const before = await storedAsBefore(t.db, v);
      expect(await hasColumns(t.db, v.id)).toBe(true);
      expect(await hasColumns(t.db, before.id)).toBe(false);
      expect(numbersOf(await loadBrainTable(t.db, before))).toEqual(
        numbersOf(await loadBrainTable(t.db, v)),
      );
    }
  });

  it("a fit gives the same numbers from either form, and the file's", async () => {
    const studyId = await newStudy();
    const brain = await store(studyId, "brain", demoBrain, demo.brainFileName);
    const sheet = await loadParticipantSheet(
      t.db,
      await store(studyId, "participants", demoSheet, demo.sheetFileName),
    );
    const before = await storedAsBefore(t.db, brain);
    const spec = modelSpecSchema.parse({
      kind: "association",
      predictor: "accuracy",
      covariates: ["age"],
      inference: "permutation",
      resamples: 200,
      correction: "maxt",
      seed: 4,
      rearrangementStreams: "blocks-v1",
    });
    const fitOf = (table: BrainTable) => runFit(spec, buildFitData(table, sheet).data);
    const binary = fitOf(await loadBrainTable(t.db, brain));
    const text = fitOf(await loadBrainTable(t.db, before));
    const file = fitOf(buildBrainTable(readTable(demo.brainCsv, demo.brainFileName)));
    expect(JSON.stringify(binary)).toBe(JSON.stringify(text));
    expect(JSON.stringify(binary)).toBe(JSON.stringify(file));
    expect(binary.regions.length).toBeGreaterThan(0);
  });

  it("cannot change once the version is complete; an incomplete version's are removed with it", async () => {
    const studyId = await newStudy();
    const v = await store(studyId, "brain", edgeCsv, "edges.csv");
    const refusal = async (run: () => Promise<unknown>) => {
      try {
        await run();
      } catch (e) {
        const cause = (e as { cause?: { message?: string } }).cause;
        return cause?.message ?? (e as Error).message;
      }
      return "(not refused)";
    };
    const ofV = and(eq(datasetColumns.datasetId, v.id), eq(datasetColumns.slot, 0));
    expect(
      await refusal(() =>
        t.db
          .update(datasetColumns)
          .set({ values: sql`decode('AAAAAAAAAAA=', 'base64')` })
          .where(ofV),
      ),
    ).toContain("dataset_columns is immutable (UPDATE refused)");
    expect(await refusal(() => t.db.delete(datasetColumns).where(ofV))).toContain(
      "dataset_columns is immutable (DELETE refused)",
    );
    expect(await refusal(() => t.db.execute(sql`truncate dataset_columns`))).toContain(
      "dataset_columns is immutable (TRUNCATE refused)",
    );

    // A stop in the middle of storing leaves an incomplete version with some columns and rows.
    const left = randomUUID();
    await t.db.insert(datasetVersions).values({ ...v, id: left, version: 99, complete: false });
    await t.db.insert(datasetColumns).values({
      datasetId: left,
      slot: 0,
      values: sql`decode(${columnToBase64(new Float64Array([1, 2]))}, 'base64')`,
    });
    await t.db.insert(datasetRows).values({
      datasetId: left,
      position: 0,
      sourceRow: 2,
      participantId: "sub-01",
      numbers: "1",
      categories: [],
    });
    expect(await removeIncompleteVersions(t.db)).toBeGreaterThanOrEqual(1);
    expect(
      await t.db.select().from(datasetColumns).where(eq(datasetColumns.datasetId, left)),
    ).toEqual([]);
    expect(await t.db.select().from(datasetVersions).where(eq(datasetVersions.id, left))).toEqual(
      [],
    );
    expect(await hasColumns(t.db, v.id)).toBe(true);
  });
});

describe("storing and reading many columns", () => {
  it("goes in batches and gives back exactly the slots asked for, in slot order", async () => {
    const studyId = await newStudy();
    const v = await store(studyId, "brain", edgeCsv, "edges.csv");
    // An incomplete version of 20,000 rows and 12 slots: written 2 and read 5 slots at a time.
    const id = randomUUID();
    await t.db
      .insert(datasetVersions)
      .values({ ...v, id, version: 50, rowCount: 20_000, complete: false });
    const rows = 20_000;
    const columns = Array.from({ length: 12 }, (_, s) =>
      new Float64Array(rows).map((_, i) => (i % 97 === s ? Number.NaN : s * 1e6 + i / 7)),
    );
    await storeColumns(t.db, id, columns);
    const got: [number, Float64Array][] = [];
    await forEachColumn(t.db, id, rows, [11, 0, 4, 3, 5, 6, 4], (slot, values) =>
      got.push([slot, values]),
    );
    expect(got.map(([slot]) => slot)).toEqual([0, 3, 4, 5, 6, 11]);
    for (const [slot, values] of got)
      expect(Buffer.from(values.buffer)).toEqual(Buffer.from(columns[slot].buffer));
    await expect(forEachColumn(t.db, id, rows, [12], () => {})).rejects.toThrow(
      `dataset column: slot 12 of version ${id} is missing`,
    );
    await t.db.delete(datasetColumns).where(eq(datasetColumns.datasetId, id));
    await t.db.delete(datasetVersions).where(eq(datasetVersions.id, id));
  });
});

describe("the binary form of a column", () => {
  it("round-trips every double bit for bit, as SQL's base64 (with its line breaks) gives it back", async () => {
    const edges = [0, -0, 1e-310, -Number.MAX_VALUE, Math.PI, Number.NaN, 1 / 3];
    const values = new Float64Array(70).map((_, k) => edges[k % edges.length] * (k + 1));
    const [row] = await t.db
      .select({ back: sql<string>`encode(decode(${columnToBase64(values)}, 'base64'), 'base64')` })
      .from(studies)
      .limit(1);
    expect(row.back).toContain("\n");
    const back = columnFromBase64(row.back, values.length);
    expect(Buffer.from(back.buffer)).toEqual(Buffer.from(values.buffer));
    // Little-endian IEEE-754: 1 is 00 00 00 00 00 00 f0 3f (IEEE 754-2008, binary64).
    expect(Buffer.from(columnToBase64(new Float64Array([1])), "base64").toString("hex")).toBe(
      "000000000000f03f",
    );
    expect(() => columnFromBase64(columnToBase64(new Float64Array(3)), 2)).toThrow(
      "dataset column: 24 bytes stored, 16 expected",
    );
  });
});
