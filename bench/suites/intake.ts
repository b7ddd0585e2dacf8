/**
 * Intake speed, in five parts.
 *
 * 1. A 2,000 participants × 400 regions brain table (≈ 8 MB CSV) and a
 *    participant sheet, through the same steps as an upload — read
 *    (decode, delimiter, papaparse), preview (types, identifier guard),
 *    confirm (typed brain table / sheet), join (roster, FitData), SHA-256 —
 *    in this process, without storage.
 * 2. The whole upload through the data service, storage included: the
 *    upload (read, check, preview — in the intake's worker thread) and the
 *    confirm (read again, type and build the rows in the worker thread;
 *    store the version and its rows) for both files, on a migrated database
 *    in a temporary directory on disk, as the server keeps it. Target for
 *    the whole upload: ≤ 3 s on this machine.
 * 3. A ≈ 49 MB long-layout brain table (885,600 rows) uploaded and
 *    confirmed through the real server over HTTP, in three shapes (many
 *    regions per participant, 2,214 rows stored; fewer regions, 88,560
 *    rows stored; one region, 885,600 rows stored), while GET /api/health
 *    and GET /api/studies are each sent every 100 ms on their own: upload
 *    and confirm durations, and those requests' p50, p95 and max. Target:
 *    p95 ≤ 100 ms while the upload and confirm run.
 *
 * 4. A 20,000 × 1,000 brain table (≈ 200 MB CSV), plain and gzip, uploaded,
 *    previewed and confirmed through the real server: wall time and the
 *    server process's peak memory (bench/intake-biobank.ts). Target: < 2 GB.
 * 5. The same table stored and loaded for a fit: time and longest event-loop stretch.
 *
 * `npm run bench -- intake`; INTAKE_PARTS=3 (or "1,2") runs only those
 * parts, INTAKE_SHAPES=3 (or "1,2") only those shapes of part 3.
 */
import { randomUUID } from "node:crypto";
import { mkdtempSync, rmSync } from "node:fs";
import os, { tmpdir } from "node:os";
import { join } from "node:path";
import { openDatabase } from "../../db/client";
import { migrateDatabase } from "../../db/migrate";
import { studies, users } from "../../db/schema";
import { confirmUpload, previewUpload } from "../../server/services/datasets";
import { PreviewStore } from "../../server/services/preview-store";
import { createRng } from "../../server/stats/rng";
import {
  buildFitData,
  confirmTable,
  previewTable,
  readTable,
  sha256Hex,
} from "../../server/intake";
import { biobankLoadForFit, biobankUpload } from "../intake-biobank";
import { latencySummary, startBenchServer } from "../server-process";

const PARTICIPANTS = 2000;
const REGIONS = 400;

function makeFiles(): { brain: Uint8Array; sheet: Uint8Array } {
  const rng = createRng(4242);
  const header = [
    "participant_id",
    ...Array.from({ length: REGIONS }, (_, r) => `region_${String(r + 1).padStart(3, "0")}`),
  ];
  const lines = [header.join(",")];
  for (let i = 0; i < PARTICIPANTS; i++) {
    const cells = [`sub-${String(i + 1).padStart(4, "0")}`];
    for (let r = 0; r < REGIONS; r++) cells.push((rng.next() * 4 - 2).toFixed(6));
    lines.push(cells.join(","));
  }
  const sheet = ["participant_id\tgroup\tage\taccuracy\tmean_fd"];
  for (let i = 0; i < PARTICIPANTS; i++) {
    sheet.push(
      [
        `sub-${String(i + 1).padStart(4, "0")}`,
        rng.next() < 0.5 ? "patient" : "control",
        String(18 + rng.int(50)),
        (0.5 + rng.next() / 2).toFixed(3),
        (0.05 + rng.next() / 5).toFixed(3),
      ].join("\t"),
    );
  }
  const enc = new TextEncoder();
  return { brain: enc.encode(`${lines.join("\n")}\n`), sheet: enc.encode(`${sheet.join("\n")}\n`) };
}

function time<T>(f: () => T): [T, number] {
  const t0 = performance.now();
  const out = f();
  return [out, performance.now() - t0];
}

export default async function intakeBench(): Promise<void> {
  const parts = (process.env.INTAKE_PARTS ?? "1,2,3,4,5").split(",").map((p) => p.trim());
  if (parts.includes("1") || parts.includes("2")) await inProcess(parts);
  if (parts.includes("3")) await largeUploadOverHttp();
  if (parts.includes("4")) await biobankUpload();
  if (parts.includes("5")) await biobankLoadForFit();
}

async function inProcess(parts: readonly string[]): Promise<void> {
  const { brain, sheet } = makeFiles();
  console.log(
    `brain table ${PARTICIPANTS} × ${REGIONS}: ${(brain.byteLength / 1e6).toFixed(1)} MB; sheet ${(sheet.byteLength / 1e3).toFixed(0)} kB`,
  );
  console.log(`machine load (1-minute average): ${os.loadavg()[0].toFixed(1)}`);
  const totals: number[] = [];
  for (let run = 1; run <= (parts.includes("1") ? 3 : 0); run++) {
    // Upload request: read both files, preview them, hash them.
    const [, tUpload] = time(() => {
      previewTable(readTable(brain, "brain.csv"), "brain");
      previewTable(readTable(sheet, "participants.tsv"), "participants");
      sha256Hex(brain);
      sha256Hex(sheet);
    });
    // Confirm request: the stored bytes are read again (nothing cached), typed, and joined.
    const [rawBrain, tRead] = time(() => readTable(brain, "brain.csv"));
    const [rawSheet, tReadSheet] = time(() => readTable(sheet, "participants.tsv"));
    const [confirmed, tConfirm] = time(() => ({
      b: confirmTable(rawBrain, "brain"),
      s: confirmTable(rawSheet, "participants"),
    }));
    const [, tJoin] = time(() => {
      if (confirmed.b.kind !== "brain" || confirmed.s.kind !== "participants")
        throw new Error("unexpected kinds");
      return buildFitData(confirmed.b.brain, confirmed.s.sheet);
    });
    const total = tUpload + tRead + tReadSheet + tConfirm + tJoin;
    totals.push(total);
    console.log(
      `run ${run}: upload (read, preview, sha256) ${tUpload.toFixed(0)} ms · confirm: read ${(tRead + tReadSheet).toFixed(0)} ms, type and check ${tConfirm.toFixed(0)} ms, join ${tJoin.toFixed(0)} ms · total ${total.toFixed(0)} ms`,
    );
  }
  if (totals.length > 0) {
    const median = [...totals].sort((a, b) => a - b)[1];
    console.log(
      `parse + validate + join, both requests (median of 3): ${median.toFixed(0)} ms (no storage)`,
    );
  }
  if (!parts.includes("2")) return;

  const dataDir = mkdtempSync(join(tmpdir(), "covarion-bench-"));
  const database = await openDatabase({ dataDir });
  try {
    await migrateDatabase(database.db);
    const [user] = await database.db
      .insert(users)
      .values({ email: "bench@lab.example", name: "Bench" })
      .returning();
    const person = { id: user.id, name: user.name, email: user.email };
    const store = new PreviewStore();
    // The intake's worker thread starts with the first upload; start it before the clock runs.
    await previewUpload(store, {
      studyId: "warm-up",
      kind: "participants",
      fileName: "participants.tsv",
      upload: { bytes: sheet },
      byteSize: sheet.byteLength,
      options: {},
      uploader: person,
      now: new Date(),
    });
    const whole: number[] = [];
    for (let run = 1; run <= 3; run++) {
      const [study] = await database.db
        .insert(studies)
        .values({ name: `Bench ${randomUUID()}`, createdBy: user.id })
        .returning();
      const now = new Date();
      const t0 = performance.now();
      const pb = await previewUpload(store, {
        studyId: study.id,
        kind: "brain",
        fileName: "brain.csv",
        upload: { bytes: brain },
        byteSize: brain.byteLength,
        options: {},
        uploader: person,
        now,
      });
      const ps = await previewUpload(store, {
        studyId: study.id,
        kind: "participants",
        fileName: "participants.tsv",
        upload: { bytes: sheet },
        byteSize: sheet.byteLength,
        options: {},
        uploader: person,
        now,
      });
      const t1 = performance.now();
      await confirmUpload(database.db, store, {
        studyId: study.id,
        datasetId: pb.id,
        actor: person,
        confirmation: {},
        now,
      });
      await confirmUpload(database.db, store, {
        studyId: study.id,
        datasetId: ps.id,
        actor: person,
        confirmation: {},
        now,
      });
      const t2 = performance.now();
      whole.push(t2 - t0);
      console.log(
        `stored run ${run}: upload requests ${(t1 - t0).toFixed(0)} ms · confirm requests with storage ${(t2 - t1).toFixed(0)} ms · total ${(t2 - t0).toFixed(0)} ms`,
      );
    }
    const m = [...whole].sort((a, b) => a - b)[1];
    console.log(
      `whole upload of both files, storage included (median of 3): ${m.toFixed(0)} ms — target ≤ 3000 ms`,
    );
  } finally {
    await database.close();
    rmSync(dataDir, { recursive: true, force: true });
  }
}

/** Participants × sessions × regions of the large long-layout table (885,600 rows, ≈ 49 MB). */
const LONG_SHAPES: readonly {
  label: string;
  participants: number;
  sessions: number;
  regions: number;
}[] = [
  {
    label: "1,107 participants × 2 sessions × 400 regions",
    participants: 1107,
    sessions: 2,
    regions: 400,
  },
  {
    label: "44,280 participants × 2 sessions × 10 regions",
    participants: 44_280,
    sessions: 2,
    regions: 10,
  },
  {
    label: "442,800 participants × 2 sessions × 1 region",
    participants: 442_800,
    sessions: 2,
    regions: 1,
  },
];
const HEALTH_EVERY_MS = 100;

/** A long-layout brain table: columns id, region, value, se, session; one row per participant, session and region. */
export function makeLongTable(
  participants: number,
  sessions: number,
  regions: number,
  seed = 5151,
): Uint8Array<ArrayBuffer> {
  const rng = createRng(seed);
  const parts: string[] = ["id,region,value,se,session"];
  for (let i = 0; i < participants; i++) {
    const id = `sub-${String(i + 1).padStart(6, "0")}`;
    for (let s = 1; s <= sessions; s++) {
      for (let r = 0; r < regions; r++) {
        parts.push(
          `${id},region_${String(r + 1).padStart(3, "0")},${(rng.next() * 4 - 2).toFixed(10)},${(0.05 + rng.next() / 5).toFixed(10)},ses-0${s}`,
        );
      }
    }
  }
  return new TextEncoder().encode(`${parts.join("\n")}\n`);
}

/** Sends GET `path` every `everyMs` on its own (never waiting for the one before) until stopped; collects the times. */
function probeEvery(base: string, path: string, headers: Record<string, string>, everyMs: number) {
  const times: number[] = [];
  let failures = 0;
  const inFlight = new Set<Promise<void>>();
  const timer = setInterval(() => {
    const t0 = performance.now();
    const p = fetch(`${base}${path}`, { headers })
      .then((r) => r.arrayBuffer())
      .then(
        () => {
          times.push(performance.now() - t0);
        },
        () => {
          failures += 1;
        },
      )
      .finally(() => inFlight.delete(p));
    inFlight.add(p);
  }, everyMs);
  return {
    times,
    failures: () => failures,
    async stop() {
      clearInterval(timer);
      await Promise.allSettled([...inFlight]);
    },
  };
}

/**
 * The large upload through the real server over HTTP: upload (multipart)
 * and confirm a ≈ 49 MB long-layout brain table while GET /api/health and
 * GET /api/studies (which reads the database) are each sent every 100 ms
 * on their own, with the session cookie; prints the upload and confirm
 * durations and the requests' p50/p95/max. Target: p95 ≤ 100 ms.
 */
export async function largeUploadOverHttp(): Promise<void> {
  const only = process.env.INTAKE_SHAPES?.split(",").map(Number);
  for (const [k, shape] of LONG_SHAPES.entries()) {
    if (only && !only.includes(k + 1)) continue;
    const bytes = makeLongTable(shape.participants, shape.sessions, shape.regions);
    const rows = shape.participants * shape.sessions * shape.regions;
    const server = await startBenchServer();
    try {
      const headers = { Cookie: server.cookie };
      const study = await fetch(`${server.base}/api/studies`, {
        method: "POST",
        headers: { ...headers, "Content-Type": "application/json" },
        body: JSON.stringify({ name: "Intake benchmark" }),
      }).then((r) => r.json() as Promise<{ id: string }>);
      const health = probeEvery(server.base, "/api/health", headers, HEALTH_EVERY_MS);
      const list = probeEvery(server.base, "/api/studies", headers, HEALTH_EVERY_MS);
      await new Promise((r) => setTimeout(r, 1000));
      const form = new FormData();
      form.set("kind", "brain");
      form.set("file", new Blob([bytes]), "bench_long.csv");
      const t0 = performance.now();
      const res = await fetch(`${server.base}/api/studies/${study.id}/datasets`, {
        method: "POST",
        body: form,
        headers,
      });
      const preview = (await res.json()) as { id: string; participants: number };
      const t1 = performance.now();
      if (res.status !== 201)
        throw new Error(`upload answered ${res.status}: ${JSON.stringify(preview).slice(0, 300)}`);
      const confirmed = await fetch(
        `${server.base}/api/studies/${study.id}/datasets/${preview.id}/confirm`,
        {
          method: "POST",
          headers: { ...headers, "Content-Type": "application/json" },
          body: "{}",
        },
      );
      const version = (await confirmed.json()) as { rowCount: number };
      const t2 = performance.now();
      if (confirmed.status !== 201)
        throw new Error(
          `confirm answered ${confirmed.status}: ${JSON.stringify(version).slice(0, 300)}`,
        );
      await new Promise((r) => setTimeout(r, 500));
      await Promise.all([health.stop(), list.stop()]);
      console.log(
        `long brain table over HTTP: ${shape.label} = ${rows.toLocaleString("en")} rows, ${(bytes.byteLength / 1e6).toFixed(1)} MB`,
      );
      console.log(`  machine load (1-minute average): ${os.loadavg()[0].toFixed(1)}`);
      console.log(
        `  upload (preview answered) ${((t1 - t0) / 1000).toFixed(1)} s · confirm (stored, ${version.rowCount.toLocaleString("en")} stored rows) ${((t2 - t1) / 1000).toFixed(1)} s`,
      );
      console.log(
        latencySummary(
          `  GET /api/health every ${HEALTH_EVERY_MS} ms (target p95 ≤ 100 ms)`,
          health.times,
        ),
      );
      console.log(latencySummary(`  GET /api/studies every ${HEALTH_EVERY_MS} ms`, list.times));
      const failed = health.failures() + list.failures();
      if (failed > 0) console.log(`  requests that failed: ${failed}`);
    } catch (error) {
      console.log(`server output:\n${server.log().split("\n").slice(-30).join("\n")}`);
      throw error;
    } finally {
      await server.stop();
    }
  }
}
