/**
 * A finished fit's report bundle through the real app
 * (GET /api/fits/:fitId/report.zip and report.sha256,
 * services/fit-report.ts): the files in their fixed order, two downloads
 * byte for byte the same, every entry dated at the fit's finish time, the
 * bundle's SHA-256 equal to that of the download, a sealed fit's seal.json
 * matching its seal, and a Viewer of a restricted study getting no
 * participant ids. Unzipped with fflate.
 *
 * The study holds the demo tables; the fit is one-sample and parametric, so
 * it finishes quickly.
 */
import { createHash } from "node:crypto";
import { eq } from "drizzle-orm";
import { strFromU8, unzipSync } from "fflate";
import { PNG } from "pngjs";
import type { Response } from "supertest";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { datasetVersions, fits, memberships } from "../../db/schema";
import { seedDemoDatasets } from "../../db/seed/demo-datasets";
import {
  type Agent,
  binaryBody,
  createTestApp,
  signInDemo,
  type TestApp,
  userIdOf,
} from "./helpers";

type Persona = "owner" | "analyst" | "reviewer" | "viewer";

// Each bundle renders a dozen PNG figures in the figure worker: slow on a shared machine.
vi.setConfig({ testTimeout: 180_000 });

let t: TestApp;
const agents = {} as Record<Persona, Agent>;
const ids = {} as Record<Persona, string>;
let studyId: string;
let fitId: string;
const setAsideParticipant = "sub-08";

beforeAll(async () => {
  t = await createTestApp();
  for (const role of ["owner", "analyst", "reviewer", "viewer"] as const) {
    agents[role] = await signInDemo(t, `${role}@demo.covarion.test`);
    ids[role] = await userIdOf(t.db, `${role}@demo.covarion.test`);
  }
  const study = await agents.owner.post("/api/studies").send({ name: "Report study" }).expect(201);
  studyId = study.body.id;
  await t.db.insert(memberships).values(
    (["analyst", "reviewer", "viewer"] as const).map((role) => ({
      studyId,
      userId: ids[role],
      role,
    })),
  );
  await seedDemoDatasets(t.db, { studyId, uploadedBy: ids.analyst, now: new Date() });
  await agents.analyst
    .post(`/api/studies/${studyId}/set-asides`)
    .send({
      participant: setAsideParticipant,
      reason: "Fell asleep in the scanner, noted at the session",
    })
    .expect(201);
  const model = await agents.analyst
    .post(`/api/studies/${studyId}/models`)
    .send({
      name: "Load effect",
      regionSelection: "independent-data",
      spec: { kind: "one-sample" },
    })
    .expect(201);
  const fit = await agents.analyst
    .post(`/api/studies/${studyId}/fits`)
    .send({ modelId: model.body.id })
    .expect(202);
  fitId = fit.body.id;
  const start = Date.now();
  for (;;) {
    const res = await agents.viewer.get(`/api/fits/${fitId}`).expect(200);
    if (res.body.status === "done") break;
    if (res.body.status === "failed" || res.body.status === "cancelled")
      throw new Error(`fit ${res.body.status}`);
    if (Date.now() - start > 60_000) throw new Error(`fit stayed ${res.body.status}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}, 120_000);

afterAll(async () => {
  await t?.close();
});

/** Answers a request's body as bytes. */
async function bytesOf(who: Agent, path: string): Promise<Response> {
  return who.get(path).buffer(true).parse(binaryBody).expect(200);
}

/** Downloads the bundle as `who` and answers its bytes (200 expected). */
async function download(who: Agent, id = fitId): Promise<Buffer> {
  const res = await bytesOf(who, `/api/fits/${id}/report.zip`);
  expect(res.headers["content-type"]).toBe("application/zip");
  expect(res.headers["content-disposition"]).toBe(
    `attachment; filename="fit-${id.slice(0, 8)}-report.zip"`,
  );
  return res.body as Buffer;
}

/** Entry names in the archive's own order (walking the local headers), and their contents. */
function entriesOf(zip: Buffer): {
  names: string[];
  files: Record<string, Uint8Array>;
  /** Each entry's DOS date and time, decoded. */
  times: string[];
} {
  const files = unzipSync(new Uint8Array(zip));
  const names: string[] = [];
  const times: string[] = [];
  const pad = (n: number) => String(n).padStart(2, "0");
  let at = 0;
  while (zip.readUInt32LE(at) === 0x04034b50) {
    const time = zip.readUInt16LE(at + 10);
    const date = zip.readUInt16LE(at + 12);
    times.push(
      `${(date >> 9) + 1980}-${pad((date >> 5) & 15)}-${pad(date & 31)}T${pad(time >> 11)}:${pad((time >> 5) & 63)}:${pad((time & 31) * 2)}`,
    );
    const nameLength = zip.readUInt16LE(at + 26);
    const extraLength = zip.readUInt16LE(at + 28);
    const name = zip.toString("utf8", at + 30, at + 30 + nameLength);
    names.push(name);
    // Entries are streamed (sizes in a data descriptor after the data): find the next header
    // from the central directory's compressed size instead.
    at = nextLocalHeader(zip, name, at + 30 + nameLength + extraLength);
  }
  return { names, files, times };
}

/** Where the entry after `name` starts: its data, then a 16-byte data descriptor. */
function nextLocalHeader(zip: Buffer, name: string, dataStart: number): number {
  let at = zip.lastIndexOf(Buffer.from([0x50, 0x4b, 0x05, 0x06]));
  let central = zip.readUInt32LE(at + 16);
  for (;;) {
    if (zip.readUInt32LE(central) !== 0x02014b50) throw new Error(`no central entry for ${name}`);
    const size = zip.readUInt32LE(central + 20);
    const nameLength = zip.readUInt16LE(central + 28);
    const extra = zip.readUInt16LE(central + 30);
    const comment = zip.readUInt16LE(central + 32);
    if (zip.toString("utf8", central + 46, central + 46 + nameLength) === name) {
      at = dataStart + size;
      return zip.readUInt32LE(at) === 0x08074b50 ? at + 16 : at;
    }
    central += 46 + nameLength + extra + comment;
  }
}

const text = (files: Record<string, Uint8Array>, name: string) => {
  const file = files[name];
  if (!file) throw new Error(`${name} is not in the bundle: ${Object.keys(files).join(", ")}`);
  return strFromU8(file);
};

describe("the report bundle of a finished fit", () => {
  it("lists the files in their fixed order, with their contents", async () => {
    const zip = await download(agents.owner);
    const { names, files, times } = entriesOf(zip);
    // Figures: the forest plot, then the figures of the first 6 regions by adjusted p (fit order on ties).
    const [fit] = await t.db.select().from(fits).where(eq(fits.id, fitId));
    const listed = (await agents.owner.get(`/api/fits/${fitId}/figures`).expect(200)).body as {
      name: string;
      kind: string;
      regions?: string[];
    }[];
    const regions = (fit.result as { regions: { region: string; pAdjusted: number | null }[] })
      .regions;
    const firstSix = regions
      .map((r, i) => ({ region: r.region, p: r.pAdjusted ?? Number.POSITIVE_INFINITY, i }))
      .sort((a, b) => a.p - b.p || a.i - b.i)
      .slice(0, 6)
      .map((r) => r.region);
    const figures = [
      "forest",
      ...firstSix.flatMap((region) =>
        listed.filter((f) => f.kind !== "forest" && f.regions?.[0] === region).map((f) => f.name),
      ),
    ];
    expect(figures.length).toBeGreaterThan(6);
    expect(names).toEqual([
      "README.txt",
      "methods.md",
      "results/regions.csv",
      "results/regions.md",
      "results/regions.tex",
      "results/regions.docx",
      "results/sentences.md",
      ...figures.flatMap((f) => [`figures/${f}.svg`, `figures/${f}.png`, `figures/${f}.txt`]),
      "recipe.json",
      "inputs.json",
      "set-asides.csv",
      "activity.csv",
    ]);
    expect(Object.keys(files)).toEqual(names);
    const readme = text(files, "README.txt");
    for (const name of names.slice(1)) expect(readme).toContain(name);
    expect(text(files, "methods.md")).toMatch(/^# Methods\n\n/);
    expect(text(files, "methods.md")).toContain("## References");
    // The same region table and recipe as their own downloads.
    const csv = await agents.owner.get(`/api/fits/${fitId}/regions.csv`).expect(200);
    expect(text(files, "results/regions.csv")).toBe(csv.text);
    const recipe = await agents.owner.get(`/api/fits/${fitId}/recipe.json`).expect(200);
    expect(text(files, "recipe.json")).toBe(recipe.text);
    // The manuscript tables and sentences as their own downloads give them.
    for (const form of ["md", "tex"]) {
      const own = await agents.owner.get(`/api/fits/${fitId}/regions.${form}`).expect(200);
      expect(text(files, `results/regions.${form}`), form).toBe(own.text);
    }
    const docx = await bytesOf(agents.owner, `/api/fits/${fitId}/regions.docx`);
    expect(Buffer.from(files["results/regions.docx"]).equals(docx.body as Buffer)).toBe(true);
    const sentences = await agents.owner.get(`/api/fits/${fitId}/sentences`).expect(200);
    // One list item per region (Markdown escapes the underscores of region names).
    const items = text(files, "results/sentences.md")
      .split("\n")
      .filter((l) => l.startsWith("- "));
    expect(items.map((l) => l.slice(4, l.indexOf("**:")).replace(/\\_/g, "_"))).toEqual(
      (sentences.body as { region: string }[]).map((s) => s.region),
    );
    // The figures as their own downloads give them: the forest plot two columns wide, the others one.
    for (const f of figures) {
      const width = f === "forest" ? 183 : 89;
      const svg = await agents.owner
        .get(`/api/fits/${fitId}/figures/${f}.svg?width=${width}`)
        .expect(200);
      expect(text(files, `figures/${f}.svg`), f).toBe(
        Buffer.isBuffer(svg.body) ? svg.body.toString("utf8") : svg.text,
      );
      const caption = await agents.owner.get(`/api/fits/${fitId}/figures/${f}.txt`).expect(200);
      expect(text(files, `figures/${f}.txt`), f).toBe(caption.text);
      const png = PNG.sync.read(Buffer.from(files[`figures/${f}.png`]));
      // 183 mm and 89 mm at 300 dpi (mm / 25.4 × 300, rounded).
      expect(png.width, f).toBe(width === 183 ? 2161 : 1051);
    }
    expect(text(files, "README.txt")).toContain(
      `first 6 regions by adjusted p (${firstSix.join(", ")}`,
    );
    // The data files, as stored.
    const inputs = JSON.parse(text(files, "inputs.json"));
    const [brain] = await t.db
      .select()
      .from(datasetVersions)
      .where(eq(datasetVersions.id, fit.brainVersionId));
    expect(inputs.brainTable).toMatchObject({
      fileName: brain.fileName,
      version: brain.version,
      sha256: brain.sha256,
    });
    expect(inputs.participantSheet?.sha256).toMatch(/^[0-9a-f]{64}$/);
    // The set-aside, who and why.
    const asides = text(files, "set-asides.csv").split("\r\n");
    expect(asides[0]).toBe("participant,scope,reason,who,when");
    expect(asides[1]).toMatch(
      new RegExp(
        `^${setAsideParticipant},all regions,"Fell asleep in the scanner, noted at the session",`,
      ),
    );
    // The run in the activity.
    const activity = text(files, "activity.csv").split("\r\n");
    expect(activity[0]).toBe("when,who,event,what");
    expect(activity[1]).toContain(",fit.run,");
    // Every entry is dated at the fit's finish time (UTC, ZIP's 2-second steps).
    const finished = fit.finishedAt as Date;
    const seconds = finished.getUTCSeconds() - (finished.getUTCSeconds() % 2);
    const expected = `${finished.toISOString().slice(0, 17)}${String(seconds).padStart(2, "0")}`;
    expect(times).toEqual(names.map(() => expected));
  });

  it("is the same byte for byte on a second download, and report.sha256 names it", async () => {
    const first = await download(agents.reviewer);
    const second = await download(agents.reviewer);
    expect(first.equals(second)).toBe(true);
    const hash = await agents.reviewer.get(`/api/fits/${fitId}/report.sha256`).expect(200);
    expect(hash.body).toEqual({
      sha256: createHash("sha256").update(first).digest("hex"),
      bytes: first.length,
    });
  });

  it("answers 409 until the fit is done", async () => {
    const [done] = await t.db.select().from(fits).where(eq(fits.id, fitId));
    const { id: _id, ...copy } = done;
    const [queued] = await t.db
      .insert(fits)
      .values({ ...copy, status: "queued", progress: 0, result: null, finishedAt: null })
      .returning();
    for (const what of ["report.zip", "report.sha256"]) {
      const res = await agents.owner.get(`/api/fits/${queued.id}/${what}`).expect(409);
      expect(res.body.error.code).toBe("conflict");
    }
    await t.db.delete(fits).where(eq(fits.id, queued.id));
  });
});

describe("a restricted study's Viewer", () => {
  it("gets no participant ids: no recipe.json, no participant column", async () => {
    await agents.owner.patch(`/api/studies/${studyId}`).send({ restricted: true }).expect(200);
    try {
      const zip = await download(agents.viewer);
      const { names, files } = entriesOf(zip);
      // No participant plots (one mark per participant): the forest plot stays.
      expect(names.filter((n) => !n.startsWith("figures/"))).toEqual([
        "README.txt",
        "methods.md",
        "results/regions.csv",
        "results/regions.md",
        "results/regions.tex",
        "results/regions.docx",
        "results/sentences.md",
        "inputs.json",
        "set-asides.csv",
        "activity.csv",
      ]);
      const figureNames = names.filter((n) => n.startsWith("figures/"));
      expect(figureNames.slice(0, 3)).toEqual([
        "figures/forest.svg",
        "figures/forest.png",
        "figures/forest.txt",
      ]);
      expect(figureNames.filter((n) => /-(scatter|strip|influence)\./.test(n))).toEqual([]);
      const asides = text(files, "set-asides.csv");
      expect(asides.split("\r\n")[0]).toBe("scope,reason,who,when");
      expect(asides).toContain("Fell asleep in the scanner");
      for (const name of names.filter((n) => !/\.(png|docx)$/.test(n)))
        expect(text(files, name), name).not.toContain(setAsideParticipant);
      expect(text(files, "README.txt")).toContain("recipe.json: this study restricts");
      // The Viewer's hash is that of the Viewer's bundle.
      const hash = await agents.viewer.get(`/api/fits/${fitId}/report.sha256`).expect(200);
      expect(hash.body.sha256).toBe(createHash("sha256").update(zip).digest("hex"));
      // The Reviewer still gets the participant column.
      const full = entriesOf(await download(agents.reviewer));
      expect(text(full.files, "set-asides.csv")).toContain(setAsideParticipant);
    } finally {
      await agents.owner.patch(`/api/studies/${studyId}`).send({ restricted: false }).expect(200);
    }
  });
});

describe("a sealed fit's bundle", () => {
  it("holds seal.json whose hash is the seal's, and the approval and seal in activity.csv", async () => {
    await agents.reviewer.post(`/api/fits/${fitId}/approve`).send({}).expect(200);
    const sealed = await agents.owner.post(`/api/fits/${fitId}/seal`).send({}).expect(200);
    const zip = await download(agents.viewer);
    const { names, files } = entriesOf(zip);
    expect(names.at(-1)).toBe("seal.json");
    const seal = JSON.parse(text(files, "seal.json"));
    expect(seal).toMatchObject({
      fit: fitId,
      sha256: sealed.body.seal.sha256,
      sealedBy: { id: ids.owner },
      sealedAt: sealed.body.seal.at,
      intact: true,
      singlePersonSignOff: false,
    });
    const events = text(files, "activity.csv")
      .trim()
      .split("\r\n")
      .slice(1)
      .map((line) => line.split(",")[2]);
    expect(events).toEqual(["fit.run", "fit.approved", "fit.sealed"]);
    expect(text(files, "README.txt")).toContain(sealed.body.seal.sha256);
    // Still deterministic once sealed (the e-mail notices of the seal are not part of it).
    expect((await download(agents.viewer)).equals(zip)).toBe(true);
  });
});
