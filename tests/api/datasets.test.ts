/**
 * Data intake through the API: uploads to previews, confirmation into
 * versions, every bad-input kind refused with the envelope and nothing
 * stored, the identifier guard, the roster join with its near miss,
 * confirmed mappings, the CSV export, roles and restricted studies,
 * preview expiry, and the demo study seeded through the same path.
 */
import { createHash } from "node:crypto";
import { and, count, eq } from "drizzle-orm";
import fc from "fast-check";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { seedDemo } from "../../db/seed";
import { seedDemoDatasets } from "../../db/seed/demo-datasets";
import { generateDemoFiles } from "../../db/seed/demo-data";
import { auditEvents, datasetRows, datasetVersions, memberships, studies } from "../../db/schema";
import {
  DEFAULT_MAX_COLUMNS,
  buildBrainTable,
  buildFitData,
  buildParticipantSheet,
  readTable,
} from "../../server/intake";
import {
  currentVersions,
  loadBrainTable,
  loadParticipantSheet,
} from "../../server/services/datasets";
import request from "supertest";
import { createApp } from "../../server/app";
import { type Agent, type TestApp, createTestApp, signInDemo, userIdOf } from "./helpers";

let t: TestApp;
const agents: Record<"owner" | "analyst" | "reviewer" | "viewer", Agent> = {} as never;
const demo = generateDemoFiles();
const sha256 = (b: string | Uint8Array) => createHash("sha256").update(b).digest("hex");

beforeAll(async () => {
  t = await createTestApp();
  for (const role of ["owner", "analyst", "reviewer", "viewer"] as const) {
    agents[role] = await signInDemo(t, `${role}@demo.covarion.test`);
  }
}, 60_000);
afterAll(async () => {
  await t?.close();
});

let studyCounter = 0;
/** A fresh study with the four demo people as members. */
async function newStudy(options: { restricted?: boolean } = {}): Promise<string> {
  studyCounter += 1;
  const ownerId = await userIdOf(t.db, "owner@demo.covarion.test");
  const [study] = await t.db
    .insert(studies)
    .values({
      name: `Intake study ${studyCounter}`,
      createdBy: ownerId,
      restricted: options.restricted ?? false,
    })
    .returning();
  for (const role of ["owner", "analyst", "reviewer", "viewer"] as const) {
    await t.db.insert(memberships).values({
      studyId: study.id,
      userId: await userIdOf(t.db, `${role}@demo.covarion.test`),
      role,
    });
  }
  return study.id;
}

async function versionCount(studyId: string): Promise<number> {
  const [row] = await t.db
    .select({ n: count() })
    .from(datasetVersions)
    .where(eq(datasetVersions.studyId, studyId));
  return Number(row.n);
}

function upload(
  agent: Agent,
  studyId: string,
  kind: string,
  content: string | Uint8Array,
  fileName: string,
  fields: Record<string, string> = {},
) {
  let req = agent.post(`/api/studies/${studyId}/datasets`).field("kind", kind);
  for (const [k, v] of Object.entries(fields)) req = req.field(k, v);
  return req.attach(
    "file",
    Buffer.from(typeof content === "string" ? new TextEncoder().encode(content) : content),
    fileName,
  );
}

async function uploadAndConfirm(
  agent: Agent,
  studyId: string,
  kind: string,
  content: string,
  fileName: string,
  confirmation: object = {},
) {
  const preview = await upload(agent, studyId, kind, content, fileName).expect(201);
  const confirmed = await agent
    .post(`/api/studies/${studyId}/datasets/${preview.body.id}/confirm`)
    .send(confirmation)
    .expect(201);
  return { preview: preview.body, version: confirmed.body };
}

describe("upload, preview, confirm", () => {
  it("a clean brain table and sheet give versions and a roster with the near miss reported, not merged", async () => {
    const studyId = await newStudy();
    const brain = await upload(
      agents.analyst,
      studyId,
      "brain",
      demo.brainCsv,
      demo.brainFileName,
    ).expect(201);
    expect(brain.body).toMatchObject({
      status: "preview",
      kind: "brain",
      fileName: demo.brainFileName,
      sha256: sha256(demo.brainCsv),
      layout: "wide",
      idColumn: "participant_id",
      sessions: ["1", "2"],
      participants: 71,
      rowCount: 87,
      problems: [],
      identifierColumns: [],
      uploadedBy: { email: "analyst@demo.covarion.test" },
    });
    expect(brain.body.regions).toHaveLength(10);
    expect(brain.body.rows).toHaveLength(20);
    // Nothing is stored by an upload alone.
    expect(await versionCount(studyId)).toBe(0);

    const confirmed = await agents.analyst
      .post(`/api/studies/${studyId}/datasets/${brain.body.id}/confirm`)
      .send({})
      .expect(201);
    expect(confirmed.body).toMatchObject({
      id: brain.body.id,
      status: "confirmed",
      kind: "brain",
      version: 1,
      current: true,
      sha256: sha256(demo.brainCsv),
      rowCount: 87,
      participantCount: 71,
      uploadedBy: { email: "analyst@demo.covarion.test" },
      confirmedBy: { email: "analyst@demo.covarion.test" },
    });
    expect(confirmed.body.columns.filter((c: { role: string }) => c.role === "se")).toHaveLength(
      10,
    );

    const sheet = await uploadAndConfirm(
      agents.analyst,
      studyId,
      "participants",
      demo.participantsTsv,
      demo.sheetFileName,
    );
    expect(
      sheet.preview.columns.map((c: { name: string; type: string }) => [c.name, c.type]),
    ).toEqual([
      ["participant_id", "id"],
      ["group", "category"],
      ["age", "number"],
      ["sex", "category"],
      ["accuracy", "number"],
      ["rt_ms", "number"],
      ["symptom_score", "number"],
      ["mean_fd", "number"],
    ]);
    expect(sheet.version).toMatchObject({ kind: "participants", version: 1, participantCount: 71 });

    const roster = await agents.analyst.get(`/api/studies/${studyId}/roster`).expect(200);
    expect(roster.body).toMatchObject({
      brainTable: { id: brain.body.id, version: 1, fileName: demo.brainFileName },
      participantSheet: { version: 1, fileName: demo.sheetFileName },
      counts: {
        matched: 69,
        onlyInBrainTable: 2,
        onlyInParticipantSheet: 2,
        duplicates: 0,
        nearMisses: 1,
        mappings: 0,
      },
      matched: 69,
      onlyInBrainTable: ["7", "sub-71"],
      onlyInParticipantSheet: ["sub-07", "sub-72"],
      nearMisses: [
        {
          brainId: "7",
          sheetId: "sub-07",
          reason: "same number written with different leading zeros",
        },
      ],
      rowsVisible: true,
    });
    expect(roster.body.rule).toMatch(/never matched automatically/);
    expect(roster.body.rows.total).toBe(73);
    expect(roster.body.rows.items[0]).toMatchObject({
      participant: "sub-01",
      status: "matched",
      via: "identical",
      values: { group: "patient" },
    });

    // Paging, filter, search and sort.
    const page = await agents.analyst
      .get(`/api/studies/${studyId}/roster?offset=10&limit=5`)
      .expect(200);
    expect(page.body.rows).toMatchObject({ total: 73, offset: 10, limit: 5 });
    expect(page.body.rows.items).toHaveLength(5);
    const onlyBrain = await agents.analyst
      .get(`/api/studies/${studyId}/roster?status=only-in-brain-table`)
      .expect(200);
    expect(onlyBrain.body.rows.items.map((r: { participant: string }) => r.participant)).toEqual([
      "7",
      "sub-71",
    ]);
    const search = await agents.analyst
      .get(`/api/studies/${studyId}/roster?search=SUB-1`)
      .expect(200);
    expect(
      search.body.rows.items.every((r: { brainId: string | null; sheetId: string | null }) =>
        `${r.brainId}${r.sheetId}`.toLowerCase().includes("sub-1"),
      ),
    ).toBe(true);
    const byAge = await agents.analyst
      .get(`/api/studies/${studyId}/roster?sort=age&order=desc&status=matched`)
      .expect(200);
    const ages = byAge.body.rows.items.map((r: { values: { age: number } }) => r.values.age);
    expect(ages).toEqual([...ages].sort((a, b) => b - a));
    const badSort = await agents.analyst
      .get(`/api/studies/${studyId}/roster?sort=height`)
      .expect(400);
    expect(badSort.body.error.message).toContain('no roster column "height"');

    // Confirming the mapping joins 7 to sub-07, once.
    const mapped = await agents.analyst
      .post(`/api/studies/${studyId}/roster/mappings`)
      .send({ mappings: [{ brainId: "7", sheetId: "sub-07" }] })
      .expect(201);
    expect(mapped.body).toMatchObject({
      matched: 70,
      onlyInBrainTable: ["sub-71"],
      onlyInParticipantSheet: ["sub-72"],
      nearMisses: [],
    });
    expect(mapped.body.rule).toMatch(/1 confirmed mapping was applied\.$/);
    await agents.analyst
      .post(`/api/studies/${studyId}/roster/mappings`)
      .send({ mappings: [{ brainId: "7", sheetId: "sub-07" }] })
      .expect(409);
    const unknown = await agents.analyst
      .post(`/api/studies/${studyId}/roster/mappings`)
      .send({ mappings: [{ brainId: "sub-99", sheetId: "sub-72" }] })
      .expect(422);
    expect(unknown.body.error.message).toContain('has no participant "sub-99"');
    await agents.analyst
      .post(`/api/studies/${studyId}/roster/mappings`)
      .send({ mappings: [{ brainId: "sub-01", sheetId: "sub-72" }] })
      .expect(409);

    const events = await t.db.select().from(auditEvents).where(eq(auditEvents.studyId, studyId));
    const kinds = events.map((e) => e.kind);
    expect(kinds.filter((k) => k === "dataset.confirmed")).toHaveLength(2);
    expect(events.find((e) => e.kind === "roster.mapping_confirmed")?.after).toMatchObject({
      brainId: "7",
      sheetId: "sub-07",
      nearMiss: "same number written with different leading zeros",
    });

    // The study's participant count follows the current brain table.
    const detail = await agents.viewer.get(`/api/studies/${studyId}`).expect(200);
    expect(detail.body.counts.participants).toBe(71);
  });

  it("versions are immutable and kept: a new upload makes version 2, version 1 stays readable", async () => {
    const studyId = await newStudy();
    const first = await uploadAndConfirm(
      agents.owner,
      studyId,
      "participants",
      "participant_id\tage\nsub-01\t30\nsub-02\t41\n",
      "participants.tsv",
    );
    const second = await uploadAndConfirm(
      agents.owner,
      studyId,
      "participants",
      "participant_id\tage\nsub-01\t30\nsub-02\t41\nsub-03\t25\n",
      "participants.tsv",
    );
    expect(second.version).toMatchObject({ version: 2, current: true, participantCount: 3 });
    const old = await agents.reviewer
      .get(`/api/studies/${studyId}/datasets/${first.version.id}?limit=1&offset=1`)
      .expect(200);
    expect(old.body).toMatchObject({ version: 1, current: false, participantCount: 2 });
    expect(old.body.rows).toEqual({
      total: 2,
      offset: 1,
      limit: 1,
      items: [{ row: 3, cells: ["sub-02", 41] }],
    });
    const list = await agents.viewer.get(`/api/studies/${studyId}/datasets`).expect(200);
    expect(list.body.map((d: { version: number }) => d.version)).toEqual([2, 1]);
    const refusal = async (run: () => Promise<unknown>) => {
      try {
        await run();
      } catch (e) {
        const err = e as Error & { cause?: Error };
        return `${err.message} ${err.cause?.message ?? ""}`;
      }
      return "not refused";
    };
    expect(
      await refusal(() =>
        t.db
          .update(datasetVersions)
          .set({ fileName: "changed.tsv" })
          .where(eq(datasetVersions.id, first.version.id)),
      ),
    ).toContain("dataset_versions is immutable (UPDATE refused)");
    expect(
      await refusal(() =>
        t.db.delete(datasetRows).where(eq(datasetRows.datasetId, first.version.id)),
      ),
    ).toContain("dataset_rows is immutable (DELETE refused)");
    // Confirming the same upload again is a conflict.
    await agents.owner
      .post(`/api/studies/${studyId}/datasets/${first.version.id}/confirm`)
      .send({})
      .expect(409);
  });

  it("reads a long brain table and stores it in the same form", async () => {
    const studyId = await newStudy();
    const text =
      "participant_id,region,value,se\ns1,a,0.5,0.1\ns1,b,0.7,0.2\ns2,a,n/a,n/a\ns2,b,0.1,0.3\n";
    const { preview, version } = await uploadAndConfirm(
      agents.analyst,
      studyId,
      "brain",
      text,
      "long.csv",
    );
    expect(preview.layout).toBe("long");
    expect(version.regions).toEqual(["a", "b"]);
    const rows = await agents.analyst
      .get(`/api/studies/${studyId}/datasets/${version.id}`)
      .expect(200);
    expect(version.columns.map((c: { name: string }) => c.name)).toEqual([
      "participant_id",
      "a",
      "a_se",
      "b",
      "b_se",
    ]);
    expect(rows.body.rows.items.map((r: { cells: unknown[] }) => r.cells)).toEqual([
      ["s1", 0.5, 0.1, 0.7, 0.2],
      ["s2", null, null, 0.1, 0.3],
    ]);
  });

  it("takes the id column and standard-error suffix chosen at upload", async () => {
    const studyId = await newStudy();
    const text = "subject;dlpfc;dlpfc.stderr\ns1;0.5;0.1\ns2;0.6;0.2\n";
    const res = await upload(agents.analyst, studyId, "brain", text, "Zürich semi.csv", {
      idColumn: "subject",
      seSuffix: ".stderr",
    }).expect(201);
    expect(res.body).toMatchObject({
      fileName: "Zürich semi.csv",
      idColumn: "subject",
      delimiterName: "semicolon",
      regions: ["dlpfc"],
    });
    expect(res.body.columns.map((c: { role: string }) => c.role)).toEqual(["id", "region", "se"]);
  });

  it("stores a wide brain table's numbers exactly as read (missing stays missing)", async () => {
    const studyId = await newStudy();
    const text = "participant_id,a,a_se,b\ns1, 0.5 ,0.10,-1e-3\ns2,n/a,NA,+2.\ns3,.25,1E1,\n";
    const { version } = await uploadAndConfirm(agents.analyst, studyId, "brain", text, "brain.csv");
    const rows = await agents.analyst
      .get(`/api/studies/${studyId}/datasets/${version.id}`)
      .expect(200);
    expect(rows.body.rows.items).toEqual([
      { row: 2, cells: ["s1", 0.5, 0.1, -0.001] },
      { row: 3, cells: ["s2", null, null, 2] },
      { row: 4, cells: ["s3", 0.25, 10, null] },
    ]);
  });
});

describe("storing without holding the database", () => {
  it("a version left incomplete by a stop is never shown, and is removed before the next version is stored", async () => {
    const studyId = await newStudy();
    const first = await uploadAndConfirm(
      agents.analyst,
      studyId,
      "brain",
      "participant_id,a\ns1,0.5\ns2,0.7\n",
      "brain.csv",
    );
    // What a stop in the middle of storing version 2 leaves: the version, incomplete, with part of its rows.
    const analystId = await userIdOf(t.db, "analyst@demo.covarion.test");
    const leftId = crypto.randomUUID();
    const now = new Date();
    await t.db.insert(datasetVersions).values({
      id: leftId,
      studyId,
      kind: "brain",
      version: 2,
      fileName: "half.csv",
      sha256: "0".repeat(64),
      byteSize: 10,
      delimiter: ",",
      layout: "wide",
      idColumn: "participant_id",
      columns: [
        { name: "participant_id", type: "id", role: "id" },
        { name: "a", type: "number", role: "region", region: "a", slot: 0 },
      ],
      droppedColumns: [],
      identifierDecisions: [],
      rowCount: 3,
      participantCount: 3,
      uploadedBy: analystId,
      uploadedAt: now,
      confirmedBy: analystId,
      confirmedAt: now,
      complete: false,
    });
    await t.db.insert(datasetRows).values([
      {
        datasetId: leftId,
        position: 0,
        sourceRow: 2,
        participantId: "s9",
        numbers: "9",
        categories: [],
      },
    ]);

    const list = await agents.analyst.get(`/api/studies/${studyId}/datasets`).expect(200);
    expect(list.body.map((d: { id: string }) => d.id)).toEqual([first.version.id]);
    expect(list.body[0]).toMatchObject({ version: 1, current: true });
    await agents.analyst.get(`/api/studies/${studyId}/datasets/${leftId}`).expect(404);
    const roster = await agents.analyst.get(`/api/studies/${studyId}/roster`).expect(200);
    expect(roster.body.brainTable).toMatchObject({ id: first.version.id, version: 1 });
    expect(roster.body.onlyInBrainTable).toEqual(["s1", "s2"]);
    const { brain } = await currentVersions(t.db, studyId);
    expect(brain?.id).toBe(first.version.id);

    const next = await uploadAndConfirm(
      agents.analyst,
      studyId,
      "brain",
      "participant_id,a\ns1,0.1\ns3,0.2\n",
      "brain.csv",
    );
    expect(next.version).toMatchObject({ version: 2, current: true });
    expect(await t.db.select().from(datasetVersions).where(eq(datasetVersions.id, leftId))).toEqual(
      [],
    );
    expect(await t.db.select().from(datasetRows).where(eq(datasetRows.datasetId, leftId))).toEqual(
      [],
    );
  });

  it("a version changes only from incomplete to complete; a complete one can be neither changed nor deleted", async () => {
    const studyId = await newStudy();
    const { version } = await uploadAndConfirm(
      agents.analyst,
      studyId,
      "participants",
      "participant_id,age\ns1,30\n",
      "sheet.csv",
    );
    const refusal = async (run: () => Promise<unknown>) => {
      try {
        await run();
      } catch (e) {
        const err = e as Error & { cause?: Error };
        return `${err.message} ${err.cause?.message ?? ""}`;
      }
      return "not refused";
    };
    const [stored] = await t.db
      .select()
      .from(datasetVersions)
      .where(eq(datasetVersions.id, version.id));
    expect(stored.complete).toBe(true);
    expect(
      await refusal(() =>
        t.db
          .update(datasetVersions)
          .set({ complete: false })
          .where(eq(datasetVersions.id, version.id)),
      ),
    ).toContain("dataset_versions is immutable (UPDATE refused)");
    expect(
      await refusal(() => t.db.delete(datasetVersions).where(eq(datasetVersions.id, version.id))),
    ).toContain("dataset_versions is immutable (DELETE refused)");
    // An incomplete version may be completed, but nothing else about it may change on the way.
    const id = crypto.randomUUID();
    await t.db.insert(datasetVersions).values({ ...stored, id, version: 2, complete: false });
    expect(
      await refusal(() =>
        t.db
          .update(datasetVersions)
          .set({ complete: true, participantCount: 99 })
          .where(eq(datasetVersions.id, id)),
      ),
    ).toContain("dataset_versions is immutable (UPDATE refused)");
    await t.db.insert(datasetRows).values([
      {
        datasetId: id,
        position: 0,
        sourceRow: 2,
        participantId: "s1",
        numbers: "30",
        categories: [],
      },
    ]);
    expect(
      await refusal(() =>
        t.db.update(datasetRows).set({ numbers: "31" }).where(eq(datasetRows.datasetId, id)),
      ),
    ).toContain("dataset_rows is immutable (UPDATE refused)");
    await t.db.update(datasetVersions).set({ complete: true }).where(eq(datasetVersions.id, id));
    expect(
      await refusal(() => t.db.delete(datasetRows).where(eq(datasetRows.datasetId, id))),
    ).toContain("dataset_rows is immutable (DELETE refused)");
  });

  it("a second confirm of an upload that is being stored is a conflict; one version is stored", async () => {
    const studyId = await newStudy();
    const preview = await upload(
      agents.analyst,
      studyId,
      "brain",
      demo.brainCsv,
      demo.brainFileName,
    ).expect(201);
    const confirm = () =>
      agents.analyst.post(`/api/studies/${studyId}/datasets/${preview.body.id}/confirm`).send({});
    const answers = await Promise.all([confirm(), confirm()]);
    expect(answers.map((a) => a.status).sort()).toEqual([201, 409]);
    expect(answers.find((a) => a.status === 409)?.body.error.code).toBe("conflict");
    expect(await versionCount(studyId)).toBe(1);
  });

  it("stores and reads back ids and values that need quoting in bulk loads", async () => {
    const studyId = await newStudy();
    const ids = [
      'sub-"q"',
      "sub-a,b",
      "sub-x\\.",
      "\\.",
      "sub-ü-東京",
      "sub-multi\nline",
      "sub-tab\tx",
      "NULL",
    ];
    const quoted = (v: string) => `"${v.replaceAll('"', '""')}"`;
    const text = `participant_id,site,score\n${ids.map((id, k) => `${quoted(id)},${quoted(k % 2 ? 'a,b "c"' : "\\N")},${k}`).join("\n")}\n`;
    const { version } = await uploadAndConfirm(
      agents.analyst,
      studyId,
      "participants",
      text,
      "odd.csv",
      { types: { site: "category" } },
    );
    const rows = await agents.analyst
      .get(`/api/studies/${studyId}/datasets/${version.id}`)
      .expect(200);
    expect(rows.body.rows.items.map((r: { cells: unknown[] }) => r.cells)).toEqual(
      ids.map((id, k) => [id, k % 2 ? 'a,b "c"' : "\\N", k]),
    );
  });
});

describe("bad input is refused with the envelope and nothing is stored", () => {
  const cases: [string, string | Uint8Array, number, string, string][] = [
    ["empty file", "", 400, "empty_file", "brain.csv: the file is empty"],
    [
      "header only",
      "participant_id,L_insula\n",
      400,
      "header_only",
      "brain.csv row 1: the file has a header row but no data rows",
    ],
    [
      "duplicate header",
      "participant_id,a,a\ns1,1,2\n",
      400,
      "duplicate_header",
      "brain.csv row 1, column a",
    ],
    [
      "ragged rows",
      "participant_id,a,b\ns1,1,2\ns2,1\n",
      400,
      "ragged_row",
      "brain.csv row 3: has 2 fields; expected 3",
    ],
    [
      "unknown delimiter",
      "participant_id|a\ns1|1\n",
      400,
      "unknown_delimiter",
      "unknown delimiter",
    ],
    [
      "spreadsheet renamed .csv",
      new Uint8Array([0x50, 0x4b, 0x03, 0x04, 0x14, 0, 6, 0]),
      400,
      "binary_file",
      "zip archive",
    ],
    [
      "legacy spreadsheet",
      new Uint8Array([0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1]),
      400,
      "binary_file",
      "legacy binary spreadsheet",
    ],
    [
      "NUL bytes",
      new Uint8Array([...new TextEncoder().encode("participant_id,a\ns1,"), 0, 0x0a]),
      400,
      "binary_file",
      "NUL bytes",
    ],
    [
      "invalid UTF-8",
      new Uint8Array([...new TextEncoder().encode("participant_id,site\ns1,Z"), 0xfc, 0x0a]),
      400,
      "not_utf8",
      "brain.csv row 2: is not valid UTF-8",
    ],
    [
      "non-numeric cell",
      "participant_id,L_insula\ns1,0.1\ns2,O.42\ns3,0.3\ns4,0.2\ns5,0.5\n",
      422,
      "not_a_number",
      'brain.csv row 3, column L_insula: "O.42" is not a number',
    ],
    [
      "one typo in a two-row table (half the cells numbers)",
      "participant_id,L_insula\ns1,0.1\ns2,O.42\n",
      422,
      "not_a_number",
      'brain.csv row 3, column L_insula: "O.42" is not a number',
    ],
    [
      "one typo among 2,000 rows",
      `participant_id,L_insula,R_insula\n${Array.from(
        { length: 2000 },
        (_, i) => `s${i + 1},${i === 1499 ? "O.42" : (i % 89) / 100},${(i % 31) / 10}`,
      ).join("\n")}\n`,
      422,
      "not_a_number",
      'brain.csv row 1501, column L_insula: "O.42" is not a number',
    ],
    [
      "duplicate participant",
      "participant_id,a\ns1,1\ns2,2\ns1,3\n",
      422,
      "duplicate_participant",
      'brain.csv row 4, column participant_id: participant "s1" appears again (first at row 2)',
    ],
  ];

  for (const [name, content, status, code, message] of cases) {
    it(name, async () => {
      const studyId = await newStudy();
      const res = await upload(agents.analyst, studyId, "brain", content, "brain.csv").expect(
        status,
      );
      expect(res.body.error.code).toBe(code);
      expect(res.body.error.message).toContain(message);
      expect(res.body.error.details.problems[0].file).toBe("brain.csv");
      expect(await versionCount(studyId)).toBe(0);
      expect(
        (await agents.analyst.get(`/api/studies/${studyId}/datasets`).expect(200)).body,
      ).toEqual([]);
    });
  }

  it("ids the matching rule treats as one participant are refused within one file, naming both rows", async () => {
    const studyId = await newStudy();
    const rows = Array.from(
      { length: 29 },
      (_, i) => `sub-${String(i + 1).padStart(2, "0")}\t${20 + i}`,
    );
    const sheet = await upload(
      agents.analyst,
      studyId,
      "participants",
      `participant_id\tage\n${rows.join("\n")}\nSUB-04\t50\n`,
      "participants.tsv",
    ).expect(422);
    expect(sheet.body.error.code).toBe("duplicate_participant");
    expect(sheet.body.error.message).toContain(
      'participants.tsv row 31, column participant_id: participant "SUB-04" is the same participant as "sub-04" at row 5',
    );
    expect(sheet.body.error.details.problems).toEqual([
      expect.objectContaining({ file: "participants.tsv", row: 31, column: "participant_id" }),
    ]);
    const wide = await upload(
      agents.analyst,
      studyId,
      "brain",
      "participant_id,a\nsub-04,0.1\n04,0.2\n",
      "brain.csv",
    ).expect(422);
    expect(wide.body.error.message).toContain(
      'brain.csv row 3, column participant_id: participant "04" is the same participant as "sub-04" at row 2',
    );
    const long = await upload(
      agents.analyst,
      studyId,
      "brain",
      "id,region,value\nsub-04,a,0.1\nsub-04,b,0.2\n sub-04 ,b,0.3\n",
      "long.csv",
    ).expect(422);
    expect(long.body.error.message).toContain(
      'long.csv row 4, column id: participant "sub-04" has region "b" again (first at row 3)',
    );
    const longRule = await upload(
      agents.analyst,
      studyId,
      "brain",
      "id,region,value\nsub-04,a,0.1\nSUB-04,a,0.2\n",
      "long.csv",
    ).expect(422);
    expect(longRule.body.error.message).toContain(
      'long.csv row 3, column id: participant "SUB-04" is the same participant as "sub-04" at row 2 (both have region "a")',
    );
    expect(await versionCount(studyId)).toBe(0);
  });

  it("more than 20,000 columns → 413", async () => {
    const studyId = await newStudy();
    const n = DEFAULT_MAX_COLUMNS + 1;
    const text = `${Array.from({ length: n }, (_, j) => `c${j}`).join(",")}\n${Array.from({ length: n }, () => "1").join(",")}\n`;
    const res = await upload(agents.analyst, studyId, "brain", text, "wide.csv").expect(413);
    expect(res.body.error.code).toBe("too_many_columns");
    expect(await versionCount(studyId)).toBe(0);
  });

  it("more than 50 MB → 413", async () => {
    const studyId = await newStudy();
    const res = await upload(
      agents.analyst,
      studyId,
      "brain",
      new Uint8Array(50 * 1024 * 1024 + 1).fill(0x31),
      "huge.csv",
    ).expect(413);
    expect(res.body.error.code).toBe("too_large");
    expect(await versionCount(studyId)).toBe(0);
  });

  it("file names lose bidirectional formatting characters; a file without a name is refused", async () => {
    const studyId = await newStudy();
    const named = await upload(
      agents.analyst,
      studyId,
      "participants",
      "participant_id,age\ns1,30\n",
      "brain\u202Evsc.exe\u2066.csv\u2069",
    ).expect(201);
    expect(named.body.fileName).toBe("brainvsc.exe.csv");
    const stored = await agents.analyst
      .post(`/api/studies/${studyId}/datasets/${named.body.id}/confirm`)
      .send({})
      .expect(201);
    expect(stored.body.fileName).toBe("brainvsc.exe.csv");
    for (const name of [".", "..", "\u202E", "\u2066\u2069"]) {
      const res = await upload(
        agents.analyst,
        studyId,
        "participants",
        "participant_id,age\ns1,30\n",
        name,
      ).expect(400);
      expect(res.body.error).toMatchObject({
        code: "validation_failed",
        message: "body.file: the uploaded file has no name",
        details: [{ field: "body.file" }],
      });
    }
    // A file part whose name is empty: sent as text, or dropped by the multipart reader.
    const boundary = "covarion-test";
    const asText = await agents.analyst
      .post(`/api/studies/${studyId}/datasets`)
      .set("Content-Type", `multipart/form-data; boundary=${boundary}`)
      .send(
        `--${boundary}\r\nContent-Disposition: form-data; name="kind"\r\n\r\nparticipants\r\n--${boundary}\r\nContent-Disposition: form-data; name="file"; filename=""\r\nContent-Type: text/csv\r\n\r\nparticipant_id,age\ns1,30\n\r\n--${boundary}--\r\n`,
      )
      .expect(400);
    expect(asText.body.error.message).toBe("body.file: the uploaded file has no name");
    const dropped = await upload(
      agents.analyst,
      studyId,
      "participants",
      "participant_id,age\ns1,30\n",
      "",
    ).expect(400);
    expect(dropped.body.error.message).toContain("the uploaded file has no name");
    expect(await versionCount(studyId)).toBe(1);
  });

  it("an upload without a file or with an unknown kind is a 400 naming the field", async () => {
    const studyId = await newStudy();
    const noFile = await agents.analyst
      .post(`/api/studies/${studyId}/datasets`)
      .field("kind", "brain")
      .expect(400);
    expect(noFile.body.error.details[0].field).toBe("body.file");
    const badKind = await upload(agents.analyst, studyId, "scans", "a,b\n1,2\n", "x.csv").expect(
      400,
    );
    expect(badKind.body.error.details[0].field).toBe("body.kind");
  });

  it("a brain-table column with one typo among four cells is refused naming the cell, not dropped", async () => {
    const studyId = await newStudy();
    const text = "participant_id,ins_l,ins_r\ns1,0.12,0.3\ns2,O.42,0.1\ns3,0.33,0.2\ns4,0.25,0.4\n";
    const res = await upload(agents.analyst, studyId, "brain", text, "brain.csv").expect(422);
    expect(res.body.error.code).toBe("not_a_number");
    expect(res.body.error.details.problems).toEqual([
      expect.objectContaining({
        file: "brain.csv",
        row: 3,
        column: "ins_l",
        message: expect.stringContaining('brain.csv row 3, column ins_l: "O.42" is not a number'),
      }),
    ]);
    expect(await versionCount(studyId)).toBe(0);
  });

  it("a brain-table column that is not read is a problem to confirm: confirm refuses until it is dropped or marked not used", async () => {
    const studyId = await newStudy();
    const text = "participant_id,site,ins_r\ns1,north,0.3\ns2,south,0.1\n";
    const preview = await upload(agents.analyst, studyId, "brain", text, "brain.csv").expect(201);
    expect(preview.body.regions).toEqual(["ins_r"]);
    expect(preview.body.problems).toEqual([
      {
        file: "brain.csv",
        column: "site",
        code: "column_left_out",
        message:
          'brain.csv column site: not a region: column site has text values (first: row 2 "north", row 3 "south"; 2 of 2 values are text); confirm leaving it out (drop it or mark it not used), or fix the file',
      },
    ]);
    const refused = await agents.analyst
      .post(`/api/studies/${studyId}/datasets/${preview.body.id}/confirm`)
      .send({})
      .expect(422);
    expect(refused.body.error).toMatchObject({
      code: "column_left_out",
      message: expect.stringContaining(
        "brain.csv column site: not a region: column site has text values",
      ),
    });
    expect(await versionCount(studyId)).toBe(0);
    const stored = await agents.analyst
      .post(`/api/studies/${studyId}/datasets/${preview.body.id}/confirm`)
      .send({ types: { site: "category" } })
      .expect(201);
    expect(stored.body.regions).toEqual(["ins_r"]);
    const second = await upload(agents.analyst, studyId, "brain", text, "brain.csv").expect(201);
    const dropped = await agents.analyst
      .post(`/api/studies/${studyId}/datasets/${second.body.id}/confirm`)
      .send({ dropColumns: ["site"] })
      .expect(201);
    expect(dropped.body.droppedColumns).toEqual(["site"]);
  });

  it("a sheet whose numeric column has a typo is previewed; confirm refuses it until the column is typed as a category", async () => {
    const studyId = await newStudy();
    const text = "participant_id,age\ns1,23\ns2,31\ns3,4O\ns4,28\ns5,35\n";
    const preview = await upload(agents.analyst, studyId, "participants", text, "sheet.csv").expect(
      201,
    );
    expect(
      preview.body.problems.map((p: { row: number; column: string }) => [p.row, p.column]),
    ).toEqual([[4, "age"]]);
    const refused = await agents.analyst
      .post(`/api/studies/${studyId}/datasets/${preview.body.id}/confirm`)
      .send({})
      .expect(422);
    expect(refused.body.error.message).toContain(
      'sheet.csv row 4, column age: "4O" is not a number',
    );
    expect(await versionCount(studyId)).toBe(0);
    const ok = await agents.analyst
      .post(`/api/studies/${studyId}/datasets/${preview.body.id}/confirm`)
      .send({ types: { age: "category" } })
      .expect(201);
    expect(ok.body.columns[1]).toMatchObject({ name: "age", type: "category" });
  });

  it("random CSV-like uploads never answer 500 and store nothing unless confirmed (seeded)", async () => {
    const studyId = await newStudy();
    const alphabet = [...'\t,;"\r\n .-0123456789abNA/_s', 0x00, 0xc3, 0xff].map((c) =>
      typeof c === "number" ? c : c.charCodeAt(0),
    );
    const bytes = fc
      .array(fc.constantFrom(...alphabet), { maxLength: 120 })
      .map((a) => new Uint8Array(a));
    const tables = fc
      .array(
        fc.array(fc.constantFrom("participant_id", "s1", "s2", "0.5", "x", "", "n/a", "-1e3"), {
          minLength: 2,
          maxLength: 2,
        }),
        {
          minLength: 1,
          maxLength: 5,
        },
      )
      .map((rows) =>
        new TextEncoder().encode(`participant_id,a\n${rows.map((r) => r.join(",")).join("\n")}\n`),
      );
    let confirmed = 0;
    const statuses = new Set<number>();
    await fc.assert(
      fc.asyncProperty(
        fc.oneof(bytes, tables),
        fc.constantFrom("brain", "participants"),
        async (content, kind) => {
          const res = await upload(agents.analyst, studyId, kind, content, "fuzz.csv");
          statuses.add(res.status);
          expect([201, 400, 413, 422]).toContain(res.status);
          if (res.status !== 201) {
            expect(res.body.error.message.startsWith("fuzz.csv")).toBe(true);
            return;
          }
          const c = await agents.analyst
            .post(`/api/studies/${studyId}/datasets/${res.body.id}/confirm`)
            .send({});
          expect([201, 422]).toContain(c.status);
          if (c.status === 201) confirmed += 1;
        },
      ),
      { seed: 4, numRuns: 2000 },
    );
    // Only confirmed uploads were stored; refusals stored nothing.
    expect(await versionCount(studyId)).toBe(confirmed);
    expect(confirmed).toBeGreaterThan(0);
    expect([...statuses].sort()).toEqual([201, 400, 422]);
  }, 300_000);
});

describe("direct-identifier guard", () => {
  it("flags identifier columns; confirm needs each dropped or kept with a reason; dropped columns are never stored", async () => {
    const studyId = await newStudy();
    const text =
      "participant_id\tage\temail\tDOB\n" +
      "sub-01\t30\tann@example.org\t1990-01-01\n" +
      "sub-02\t41\tbo@example.org\t1982-05-17\n";
    const preview = await upload(
      agents.analyst,
      studyId,
      "participants",
      text,
      "participants.tsv",
    ).expect(201);
    expect(preview.body.identifierColumns).toEqual([
      { column: "email", kind: "email", reason: "the column name suggests e-mail addresses" },
      { column: "DOB", kind: "birth-date", reason: "the column name suggests birth dates" },
    ]);
    const refused = await agents.analyst
      .post(`/api/studies/${studyId}/datasets/${preview.body.id}/confirm`)
      .send({ dropColumns: ["email"] })
      .expect(422);
    expect(refused.body.error.message).toBe(
      "participants.tsv column DOB: may hold direct identifiers (the column name suggests birth dates); drop the column or give a reason to keep it",
    );
    expect(await versionCount(studyId)).toBe(0);
    const ok = await agents.analyst
      .post(`/api/studies/${studyId}/datasets/${preview.body.id}/confirm`)
      .send({
        dropColumns: ["email"],
        identifierReasons: { DOB: "age at scan is computed from it; removed before sharing" },
      })
      .expect(201);
    expect(ok.body.droppedColumns).toEqual(["email"]);
    expect(ok.body.columns.map((c: { name: string }) => c.name)).toEqual([
      "participant_id",
      "age",
      "DOB",
    ]);
    const rows = await agents.analyst
      .get(`/api/studies/${studyId}/datasets/${ok.body.id}`)
      .expect(200);
    expect(JSON.stringify(rows.body)).not.toContain("example.org");
    const stored = await t.db
      .select()
      .from(datasetRows)
      .where(eq(datasetRows.datasetId, ok.body.id));
    expect(JSON.stringify(stored)).not.toContain("example.org");
    const events = await t.db
      .select()
      .from(auditEvents)
      .where(
        and(eq(auditEvents.studyId, studyId), eq(auditEvents.kind, "dataset.identifier_confirmed")),
      );
    expect(events.map((e) => e.after)).toEqual([
      { column: "email", kind: "email", decision: "dropped" },
      {
        column: "DOB",
        kind: "birth-date",
        decision: "kept",
        reason: "age at scan is computed from it; removed before sharing",
      },
    ]);
  });
});

describe("roles, restricted studies, export, expiry", () => {
  it("Viewers and Reviewers cannot upload, confirm or map", async () => {
    const studyId = await newStudy();
    for (const role of ["viewer", "reviewer"] as const) {
      const res = await upload(
        agents[role],
        studyId,
        "brain",
        demo.brainCsv,
        demo.brainFileName,
      ).expect(403);
      expect(res.body.error.code).toBe("forbidden");
    }
    const preview = await upload(
      agents.analyst,
      studyId,
      "brain",
      demo.brainCsv,
      demo.brainFileName,
    ).expect(201);
    await agents.viewer
      .post(`/api/studies/${studyId}/datasets/${preview.body.id}/confirm`)
      .send({})
      .expect(403);
    await agents.reviewer
      .post(`/api/studies/${studyId}/roster/mappings`)
      .send({ mappings: [{ brainId: "7", sheetId: "sub-07" }] })
      .expect(403);
    expect(await versionCount(studyId)).toBe(0);
  });

  it("Viewers of a restricted study see counts, not participant rows", async () => {
    const studyId = await newStudy({ restricted: true });
    const brain = await uploadAndConfirm(
      agents.owner,
      studyId,
      "brain",
      demo.brainCsv,
      demo.brainFileName,
    );
    await uploadAndConfirm(
      agents.owner,
      studyId,
      "participants",
      demo.participantsTsv,
      demo.sheetFileName,
    );
    const viewer = await agents.viewer.get(`/api/studies/${studyId}/roster`).expect(200);
    expect(viewer.body).toMatchObject({
      rowsVisible: false,
      counts: { matched: 69, onlyInBrainTable: 2, onlyInParticipantSheet: 2, nearMisses: 1 },
      matched: 69,
      onlyInBrainTable: null,
      onlyInParticipantSheet: null,
      nearMisses: null,
      duplicates: null,
      mappings: null,
      rows: null,
    });
    // No participant id appears (the rule's own example ids aside).
    for (const id of ["sub-23", "sub-41", "sub-71", "sub-72"])
      expect(JSON.stringify(viewer.body)).not.toContain(id);
    const dataset = await agents.viewer
      .get(`/api/studies/${studyId}/datasets/${brain.version.id}`)
      .expect(200);
    expect(dataset.body.rows).toBeNull();
    expect(dataset.body.participantCount).toBe(71);
    await agents.viewer.get(`/api/studies/${studyId}/roster.csv`).expect(403);
    const reviewer = await agents.reviewer.get(`/api/studies/${studyId}/roster`).expect(200);
    expect(reviewer.body.rows.total).toBe(73);
  });

  it("exports the roster as CSV with formula cells neutralised and numbers kept", async () => {
    const studyId = await newStudy();
    await uploadAndConfirm(
      agents.analyst,
      studyId,
      "brain",
      "participant_id,a\ns1,0.5\ns2,-0.4\n",
      "brain.csv",
    );
    await uploadAndConfirm(
      agents.analyst,
      studyId,
      "participants",
      'participant_id,note,score\ns1,"=HYPERLINK(""x"")",-0.42\ns2,@SUM(A1),3\n',
      "sheet.csv",
    );
    const res = await agents.viewer.get(`/api/studies/${studyId}/roster.csv`).expect(200);
    expect(res.headers["content-type"]).toMatch(/^text\/csv/);
    expect(res.headers["content-disposition"]).toMatch(
      /^attachment; filename="?intake-study-\d+-roster\.csv"?$/,
    );
    expect(res.text).toBe(
      "participant,brain_table_id,participant_sheet_id,status,matched_by,sessions,note,score\r\n" +
        `s1,s1,s1,matched,identical,,"'=HYPERLINK(""x"")",-0.42\r\n` +
        "s2,s2,s2,matched,identical,,'@SUM(A1),3\r\n",
    );
  });

  it("previews expire: a late confirm is 410 and stores nothing", async () => {
    const studyId = await newStudy();
    const preview = await upload(
      agents.analyst,
      studyId,
      "brain",
      "participant_id,a\ns1,1\n",
      "brain.csv",
    ).expect(201);
    t.advanceClock(2 * 60 * 60 * 1000);
    const res = await agents.analyst
      .post(`/api/studies/${studyId}/datasets/${preview.body.id}/confirm`)
      .send({})
      .expect(410);
    expect(res.body.error).toEqual({
      code: "gone",
      message: "this upload expired; upload the file again",
    });
    await agents.analyst.get(`/api/studies/${studyId}/datasets/${preview.body.id}`).expect(410);
    expect(await versionCount(studyId)).toBe(0);
  });

  it("a preview confirmed after a restart is 410 (expired), not 404; an id never issued stays 404", async () => {
    const studyId = await newStudy();
    const other = await newStudy();
    const preview = await upload(
      agents.analyst,
      studyId,
      "brain",
      "participant_id,a\ns1,1\n",
      "brain.csv",
    ).expect(201);
    const confirmed = await upload(
      agents.analyst,
      studyId,
      "brain",
      "participant_id,a\ns1,2\n",
      "brain.csv",
    ).expect(201);
    await agents.analyst
      .post(`/api/studies/${studyId}/datasets/${confirmed.body.id}/confirm`)
      .send({})
      .expect(201);
    // The restarted server: the same database and secret, a new process's empty preview store.
    const restarted = createApp({
      config: t.config,
      db: t.db,
      mailer: t.services.mailer,
      fitJobs: t.app.locals.fitJobs,
      log: () => {},
    });
    const agent = request.agent(restarted);
    await agent
      .post("/api/dev/demo-sign-in")
      .send({ email: "analyst@demo.covarion.test" })
      .expect(200);
    const late = await agent
      .post(`/api/studies/${studyId}/datasets/${preview.body.id}/confirm`)
      .send({})
      .expect(410);
    expect(late.body.error).toEqual({
      code: "gone",
      message: "this upload expired; upload the file again",
    });
    await agent.get(`/api/studies/${studyId}/datasets/${preview.body.id}`).expect(410);
    // Confirmed before the restart: a conflict, as before it.
    await agent
      .post(`/api/studies/${studyId}/datasets/${confirmed.body.id}/confirm`)
      .send({})
      .expect(409);
    // The id belongs to another study, or was never issued: not found.
    await agent
      .post(`/api/studies/${other}/datasets/${preview.body.id}/confirm`)
      .send({})
      .expect(404);
    await agent
      .post(`/api/studies/${studyId}/datasets/${crypto.randomUUID()}/confirm`)
      .send({})
      .expect(404);
    const forged = `${preview.body.id.slice(0, 24)}${preview.body.id.slice(24).split("").reverse().join("")}`;
    await agent.post(`/api/studies/${studyId}/datasets/${forged}/confirm`).send({}).expect(404);
    expect(await versionCount(studyId)).toBe(1);
  });

  it("a preview of another study is not found", async () => {
    const a = await newStudy();
    const b = await newStudy();
    const preview = await upload(
      agents.analyst,
      a,
      "brain",
      "participant_id,a\ns1,1\n",
      "brain.csv",
    ).expect(201);
    await agents.analyst
      .post(`/api/studies/${b}/datasets/${preview.body.id}/confirm`)
      .send({})
      .expect(404);
    await agents.analyst.get(`/api/studies/${b}/datasets/${preview.body.id}`).expect(404);
  });
});

describe("demo study", () => {
  it("seeds the demo brain table and sheet through the same path as an upload", async () => {
    const fresh = await createTestApp({ seed: false });
    try {
      const result = await seedDemo(fresh.db, { now: new Date(), seedDemoDatasets });
      expect(result.seeded).toBe(true);
      const owner = await signInDemo(fresh, "owner@demo.covarion.test");
      const studyId = result.studyId as string;
      const list = await owner.get(`/api/studies/${studyId}/datasets`).expect(200);
      expect(
        list.body
          .map((d: { kind: string; version: number; sha256: string }) => [
            d.kind,
            d.version,
            d.sha256,
          ])
          .sort(),
      ).toEqual(
        [
          ["brain", 1, sha256(demo.brainCsv)],
          ["participants", 1, sha256(demo.participantsTsv)],
        ].sort(),
      );
      const roster = await owner.get(`/api/studies/${studyId}/roster`).expect(200);
      expect(roster.body).toMatchObject({
        matched: 69,
        onlyInBrainTable: ["7", "sub-71"],
        onlyInParticipantSheet: ["sub-07", "sub-72"],
      });
      const detail = await owner.get(`/api/studies/${studyId}`).expect(200);
      expect(detail.body.counts.participants).toBe(71);

      // The stored versions read back into exactly the numbers the files give.
      const { brain, participants } = await currentVersions(fresh.db, studyId);
      const stored = buildFitData(
        await loadBrainTable(fresh.db, brain!),
        await loadParticipantSheet(fresh.db, participants!),
      );
      const direct = buildFitData(
        buildBrainTable(readTable(demo.brainCsv, demo.brainFileName)),
        buildParticipantSheet(readTable(demo.participantsTsv, demo.sheetFileName)),
      );
      expect(stored.data.participants).toEqual(direct.data.participants);
      expect(stored.data.values.map((v) => Array.from(v))).toEqual(
        direct.data.values.map((v) => Array.from(v)),
      );
      expect(stored.data.standardErrors?.map((v) => Array.from(v ?? []))).toEqual(
        direct.data.standardErrors?.map((v) => Array.from(v ?? [])),
      );
      expect(stored.data.sessions?.values.map((r) => r.map((v) => Array.from(v)))).toEqual(
        direct.data.sessions?.values.map((r) => r.map((v) => Array.from(v))),
      );
      expect(stored.data.numericColumns).toEqual(direct.data.numericColumns);
      expect(stored.data.categoricalColumns).toEqual(direct.data.categoricalColumns);
    } finally {
      await fresh.close();
    }
  }, 60_000);
});
