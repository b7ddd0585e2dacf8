/**
 * Uploads through the API as files on disk: gzip-compressed tables
 * (.csv.gz, .tsv.gz) preview and confirm as the same table uncompressed
 * does; a truncated or damaged gzip file, or a file named .gz that is not
 * compressed, answers 400 naming the file; the size limit (MAX_UPLOAD_MB,
 * on the bytes received, and twenty times that for a compressed file's
 * text) and the column limit (MAX_UPLOAD_COLUMNS) answer 413 naming the
 * setting; and no uploaded file is left in the uploads folder once the
 * upload is refused or confirmed. The app runs with small limits (1 MB,
 * 40 columns) so the tables stay small.
 */
import { createHash } from "node:crypto";
import { readdirSync } from "node:fs";
import { join } from "node:path";
import { gzipSync } from "node:zlib";
import { eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { generateDemoFiles } from "../../db/seed/demo-data";
import { datasetVersions, memberships, studies } from "../../db/schema";
import { loadBrainTable, loadParticipantSheet } from "../../server/services/datasets";
import { type Agent, type TestApp, createTestApp, signInDemo, userIdOf } from "./helpers";

let t: TestApp;
let analyst: Agent;
const demo = generateDemoFiles();
const sha256 = (b: Uint8Array) => createHash("sha256").update(b).digest("hex");

beforeAll(async () => {
  t = await createTestApp({ env: { MAX_UPLOAD_MB: "1", MAX_UPLOAD_COLUMNS: "40" } });
  analyst = await signInDemo(t, "analyst@demo.covarion.test");
}, 60_000);
afterAll(async () => {
  await t?.close();
});

let studyCounter = 0;
async function newStudy(): Promise<string> {
  studyCounter += 1;
  const ownerId = await userIdOf(t.db, "owner@demo.covarion.test");
  const [study] = await t.db
    .insert(studies)
    .values({ name: `Compressed uploads ${studyCounter}`, createdBy: ownerId })
    .returning();
  await t.db.insert(memberships).values([
    { studyId: study.id, userId: ownerId, role: "owner" },
    {
      studyId: study.id,
      userId: await userIdOf(t.db, "analyst@demo.covarion.test"),
      role: "analyst",
    },
  ]);
  return study.id;
}

function upload(studyId: string, kind: string, bytes: Uint8Array, fileName: string) {
  return analyst
    .post(`/api/studies/${studyId}/datasets`)
    .field("kind", kind)
    .attach("file", Buffer.from(bytes), fileName);
}

/** Files waiting in the uploads folder. */
function waitingFiles(): string[] {
  try {
    return readdirSync(join(t.config.dataDir, "uploads"));
  } catch {
    return [];
  }
}

/** Waits until the uploads folder is empty (files are removed once the answer has gone out). */
async function uploadsEmpty(): Promise<string[]> {
  for (let i = 0; i < 50 && waitingFiles().length > 0; i++)
    await new Promise((r) => setTimeout(r, 20));
  return waitingFiles();
}

const enc = (s: string) => new TextEncoder().encode(s);

describe("gzip-compressed uploads", () => {
  it("a .csv.gz brain table and a .tsv.gz sheet preview and confirm as the same tables uncompressed", async () => {
    const plainStudy = await newStudy();
    const gzStudy = await newStudy();
    const brainGz = gzipSync(enc(demo.brainCsv));
    const sheetGz = gzipSync(enc(demo.participantsTsv));

    const plain = await upload(plainStudy, "brain", enc(demo.brainCsv), "brain.csv").expect(201);
    const gz = await upload(gzStudy, "brain", brainGz, "brain.csv.gz").expect(201);
    expect(gz.body).toMatchObject({
      fileName: "brain.csv.gz",
      sha256: sha256(brainGz),
      byteSize: brainGz.byteLength,
      delimiter: ",",
    });
    for (const key of ["rowCount", "participants", "regions", "sessions", "columns", "rows"])
      expect(gz.body[key], key).toEqual(plain.body[key]);
    // The preview's file waits on disk until it is confirmed.
    expect(waitingFiles().length).toBe(2);

    const sheet = await upload(gzStudy, "participants", sheetGz, "participants.tsv.gz").expect(201);
    expect(sheet.body).toMatchObject({ delimiter: "\t", fileName: "participants.tsv.gz" });

    const confirm = (studyId: string, id: string) =>
      analyst.post(`/api/studies/${studyId}/datasets/${id}/confirm`).send({}).expect(201);
    const plainVersion = await confirm(plainStudy, plain.body.id);
    const gzVersion = await confirm(gzStudy, gz.body.id);
    await confirm(gzStudy, sheet.body.id);
    expect(gzVersion.body).toMatchObject({ sha256: sha256(brainGz), rowCount: 87 });
    expect(await uploadsEmpty()).toEqual([]);

    const version = async (id: string) =>
      (await t.db.select().from(datasetVersions).where(eq(datasetVersions.id, id)))[0];
    const a = await loadBrainTable(t.db, await version(plainVersion.body.id));
    const b = await loadBrainTable(t.db, await version(gzVersion.body.id));
    expect(b.entries).toEqual(a.entries);
    expect(b.values).toEqual(a.values);
    expect(b.standardErrors).toEqual(a.standardErrors);
    const s = await loadParticipantSheet(t.db, await version(sheet.body.id));
    expect(s.ids.length).toBe(sheet.body.participants);
  });

  it("a truncated gzip file answers 400 naming the file, and its upload is removed", async () => {
    const studyId = await newStudy();
    const gz = gzipSync(enc(demo.brainCsv));
    const res = await upload(studyId, "brain", gz.subarray(0, gz.length >> 1), "cut.csv.gz").expect(
      400,
    );
    expect(res.body.error.code).toBe("bad_gzip");
    expect(res.body.error.message).toMatch(/^cut\.csv\.gz: is a truncated gzip file/);
    expect(await uploadsEmpty()).toEqual([]);
  });

  it("a damaged gzip file answers 400 naming the file", async () => {
    const studyId = await newStudy();
    const gz = Buffer.from(gzipSync(enc(demo.brainCsv)));
    for (let k = 40; k < 80; k++) gz[k] ^= 0x5a;
    const res = await upload(studyId, "brain", gz, "damaged.csv.gz").expect(400);
    expect(res.body.error.code).toBe("bad_gzip");
    expect(res.body.error.message).toMatch(/^damaged\.csv\.gz: is a damaged gzip file/);
    expect(await uploadsEmpty()).toEqual([]);
  });

  it("an upload refused at the edge (a bad field) leaves no file behind", async () => {
    const studyId = await newStudy();
    await upload(studyId, "neither", gzipSync(enc(demo.brainCsv)), "brain.csv.gz").expect(400);
    expect(await uploadsEmpty()).toEqual([]);
  });

  it("a file named .gz that is not compressed answers 400", async () => {
    const studyId = await newStudy();
    const res = await upload(studyId, "brain", enc(demo.brainCsv), "plain.csv.gz").expect(400);
    expect(res.body.error.message).toMatch(/^plain\.csv\.gz: is named \.gz but is not gzip/);
  });
});

describe("upload limits from the settings", () => {
  it("a file over MAX_UPLOAD_MB answers 413 naming the limit and the setting; nothing is left", async () => {
    const studyId = await newStudy();
    const rows = Array.from({ length: 120_000 }, (_, i) => `s${i},0.5`);
    const text = `participant_id,a\n${rows.join("\n")}\n`;
    expect(text.length).toBeGreaterThan(1024 * 1024);
    const res = await upload(studyId, "brain", enc(text), "big.csv").expect(413);
    expect(res.body.error.code).toBe("too_large");
    expect(res.body.error.message).toMatch(/^big\.csv: the file is larger than the limit of 1 MB/);
    expect(res.body.error.message).toContain("MAX_UPLOAD_MB");
    expect(await uploadsEmpty()).toEqual([]);
  });

  it("a small gzip file whose text is over 20 × MAX_UPLOAD_MB answers 413 as it decompresses", async () => {
    const studyId = await newStudy();
    const line = "s1,0.5\n";
    const text = `participant_id,a\n${line.repeat(Math.ceil((21 * 1024 * 1024) / line.length))}`;
    const gz = gzipSync(enc(text));
    expect(gz.byteLength).toBeLessThan(1024 * 1024);
    const res = await upload(studyId, "brain", gz, "bomb.csv.gz").expect(413);
    expect(res.body.error.message).toMatch(/^bomb\.csv\.gz: decompressed, the file has more than/);
    expect(res.body.error.message).toContain("MAX_UPLOAD_MB");
  });

  it("more columns than MAX_UPLOAD_COLUMNS answers 413 naming the setting", async () => {
    const studyId = await newStudy();
    const header = ["participant_id", ...Array.from({ length: 40 }, (_, j) => `r${j}`)];
    const text = `${header.join(",")}\ns1,${Array(40).fill("0.1").join(",")}\n`;
    const res = await upload(studyId, "brain", enc(text), "wide.csv").expect(413);
    expect(res.body.error.code).toBe("too_many_columns");
    expect(res.body.error.message).toBe(
      "wide.csv row 1: the header has more than 40 columns; the limit is 40; raise it with MAX_UPLOAD_COLUMNS",
    );
    const ok = `${header.slice(0, 40).join(",")}\ns1,${Array(39).fill("0.1").join(",")}\n`;
    await upload(studyId, "brain", enc(ok), "wide.csv").expect(201);
  });
});
