/**
 * A biobank-size brain table through the real server over HTTP: 20,000
 * participants × 1,000 regions (≈ 200 MB as CSV text), uploaded plain and
 * gzip-compressed, each to a fresh server: upload (file to disk, read and
 * previewed in the intake's worker thread) → confirm (read again, typed,
 * stored). Prints each step's wall time and the server process's peak
 * resident memory (Linux: VmHWM of /proc/<pid>/status, reset before each
 * step through /proc/<pid>/clear_refs; sampled VmRSS every 50 ms beside it,
 * worker threads included). Target: peak under 2 GB.
 *
 * Not a suite (bench/index.ts runs only bench/suites/): part 4 of the
 * intake suite (`npm run bench -- intake`; INTAKE_PARTS=4 for this part
 * alone, INTAKE_PARTS=5 for the load for a fit; BIOBANK_PARTICIPANTS / BIOBANK_REGIONS for another size).
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import os, { tmpdir } from "node:os";
import { join } from "node:path";
import { monitorEventLoopDelay } from "node:perf_hooks";
import { promisify } from "node:util";
import { gzip } from "node:zlib";
import { eq, sql } from "drizzle-orm";
import { type Database, openDatabase } from "../db/client";
import { migrateDatabase } from "../db/migrate";
import { type DatasetVersion, datasetVersions, studies, users } from "../db/schema";
import { intakeJobs } from "../server/jobs/intake-jobs";
import { loadBrainTable, storeVersion } from "../server/services/datasets";
import { createRng } from "../server/stats/rng";
import { startBenchServer } from "./server-process";

const gzipAsync = promisify(gzip);
const TARGET_BYTES = 2 * 1024 ** 3;

/** The wide table as CSV bytes: participant_id and region_0001 … with values to 6 decimals. */
export function makeWideTable(participants: number, regions: number, seed = 2026): Buffer {
  const rng = createRng(seed);
  const parts: Buffer[] = [];
  const header = ["participant_id"];
  for (let r = 0; r < regions; r++) header.push(`region_${String(r + 1).padStart(4, "0")}`);
  parts.push(Buffer.from(`${header.join(",")}\n`));
  for (let i = 0; i < participants; i++) {
    let line = `sub-${String(i + 1).padStart(6, "0")}`;
    for (let r = 0; r < regions; r++) line += `,${(rng.next() * 4 - 2).toFixed(6)}`;
    parts.push(Buffer.from(`${line}\n`));
  }
  return Buffer.concat(parts);
}

function memoryOf(pid: number): { rss: number; hwm: number } {
  const status = readFileSync(`/proc/${pid}/status`, "utf8");
  const kb = (key: string) => Number(new RegExp(`${key}:\\s+(\\d+) kB`).exec(status)?.[1] ?? 0);
  return { rss: kb("VmRSS") * 1024, hwm: kb("VmHWM") * 1024 };
}

function resetPeak(pid: number): boolean {
  try {
    writeFileSync(`/proc/${pid}/clear_refs`, "5");
    return true;
  } catch {
    return false;
  }
}

const gb = (b: number) => `${(b / 1024 ** 3).toFixed(2)} GB`;

/** Runs `step` while sampling the server's memory; its time and peak. */
async function measured<T>(
  pid: number,
  step: () => Promise<T>,
): Promise<{ value: T; ms: number; peak: number; sampled: number }> {
  const reset = resetPeak(pid);
  let sampled = 0;
  const timer = setInterval(() => {
    sampled = Math.max(sampled, memoryOf(pid).rss);
  }, 50);
  const t0 = performance.now();
  try {
    const value = await step();
    const ms = performance.now() - t0;
    const { rss, hwm } = memoryOf(pid);
    sampled = Math.max(sampled, rss);
    return { value, ms, peak: reset ? hwm : sampled, sampled };
  } finally {
    clearInterval(timer);
  }
}

export async function biobankUpload(): Promise<void> {
  const participants = Number(process.env.BIOBANK_PARTICIPANTS ?? 20_000);
  const regions = Number(process.env.BIOBANK_REGIONS ?? 1000);
  const t0 = performance.now();
  const csv = makeWideTable(participants, regions);
  const gz = await gzipAsync(csv);
  console.log(
    `biobank brain table ${participants.toLocaleString("en")} × ${regions.toLocaleString("en")}: ${(csv.byteLength / 1e6).toFixed(1)} MB CSV, ${(gz.byteLength / 1e6).toFixed(1)} MB gzip (made in ${((performance.now() - t0) / 1000).toFixed(1)} s)`,
  );
  console.log(`machine load (1-minute average): ${os.loadavg()[0].toFixed(1)}`);
  // The server takes uploads up to 512 MB for this part.
  const previous = process.env.MAX_UPLOAD_MB;
  process.env.MAX_UPLOAD_MB = "512";
  try {
    for (const [label, bytes, fileName] of [
      ["plain", csv, "biobank.csv"],
      ["gzip", gz, "biobank.csv.gz"],
    ] as const) {
      const server = await startBenchServer();
      const pid = server.child.pid as number;
      try {
        const headers = { Cookie: server.cookie };
        const study = await fetch(`${server.base}/api/studies`, {
          method: "POST",
          headers: { ...headers, "Content-Type": "application/json" },
          body: JSON.stringify({ name: "Biobank benchmark" }),
        }).then((r) => r.json() as Promise<{ id: string }>);
        const idle = memoryOf(pid).rss;
        const up = await measured(pid, async () => {
          const form = new FormData();
          form.set("kind", "brain");
          form.set("file", new Blob([bytes as Uint8Array<ArrayBuffer>]), fileName);
          const res = await fetch(`${server.base}/api/studies/${study.id}/datasets`, {
            method: "POST",
            body: form,
            headers,
          });
          const body = (await res.json()) as { id: string; rowCount: number; regions: string[] };
          if (res.status !== 201)
            throw new Error(`upload answered ${res.status}: ${JSON.stringify(body).slice(0, 300)}`);
          return body;
        });
        const confirm = await measured(pid, async () => {
          const res = await fetch(
            `${server.base}/api/studies/${study.id}/datasets/${up.value.id}/confirm`,
            {
              method: "POST",
              headers: { ...headers, "Content-Type": "application/json" },
              body: "{}",
            },
          );
          const body = (await res.json()) as { rowCount: number };
          if (res.status !== 201)
            throw new Error(
              `confirm answered ${res.status}: ${JSON.stringify(body).slice(0, 300)}`,
            );
          return body;
        });
        const peak = Math.max(up.peak, confirm.peak);
        console.log(
          `  ${label.padEnd(5)} (${(bytes.byteLength / 1e6).toFixed(1)} MB sent): upload → preview ${(up.ms / 1000).toFixed(1)} s (${up.value.regions.length} regions, ${up.value.rowCount} rows), peak ${gb(up.peak)} · confirm ${(confirm.ms / 1000).toFixed(1)} s (${confirm.value.rowCount} rows stored), peak ${gb(confirm.peak)} · server at rest before ${gb(idle)} · target peak < 2 GB: ${peak < TARGET_BYTES ? "met" : "NOT met"}`,
        );
      } catch (error) {
        console.log(`server output:\n${server.log().split("\n").slice(-30).join("\n")}`);
        throw error;
      } finally {
        await server.stop();
      }
    }
  } finally {
    if (previous === undefined) delete process.env.MAX_UPLOAD_MB;
    else process.env.MAX_UPLOAD_MB = previous;
  }
}

/**
 * Loading the stored biobank table for a fit, as the fit's data source does
 * (services/datasets.ts `loadBrainTable`): from the version's binary number
 * columns (`dataset_columns`, stored since migration 0017), and from the
 * same version as one stored before that holds it (its rows' numbers as
 * text, decoded on the request thread page by page) — in the same run, so
 * both see the same machine load. Total time, the longest stretch the
 * event loop was held, and the time to store the version. The table is
 * stored through the same path as a confirmation, in a database in a
 * temporary folder.
 */
/** A copy of a version as one stored before migration 0017 holds it: its rows only, no binary columns. */
async function copyAsStoredBefore(db: Database, v: DatasetVersion): Promise<DatasetVersion> {
  const id = crypto.randomUUID();
  await db.insert(datasetVersions).values({ ...v, id, version: v.version + 1, complete: false });
  await db.execute(sql`
    insert into dataset_rows (dataset_id, position, source_row, participant_id, session, numbers, categories)
    select ${id}, position, source_row, participant_id, session, numbers, categories
    from dataset_rows where dataset_id = ${v.id}`);
  await db.update(datasetVersions).set({ complete: true }).where(eq(datasetVersions.id, id));
  return { ...v, id, version: v.version + 1 };
}

export async function biobankLoadForFit(): Promise<void> {
  const participants = Number(process.env.BIOBANK_PARTICIPANTS ?? 20_000);
  const regions = Number(process.env.BIOBANK_REGIONS ?? 1000);
  const csv = makeWideTable(participants, regions);
  const dataDir = mkdtempSync(join(tmpdir(), "covarion-bench-"));
  const database = await openDatabase({ dataDir });
  try {
    await migrateDatabase(database.db);
    const [user] = await database.db
      .insert(users)
      .values({ email: "bench@lab.example", name: "Bench" })
      .returning();
    const [study] = await database.db
      .insert(studies)
      .values({ name: "Biobank load", createdBy: user.id })
      .returning();
    const now = new Date();
    const tStore = performance.now();
    const stored = await storeVersion(database.db, {
      id: crypto.randomUUID(),
      studyId: study.id,
      kind: "brain",
      fileName: "biobank.csv",
      bytes: csv,
      limits: { maxBytes: 512 * 1024 * 1024, maxColumns: 20_000 },
      confirmation: {},
      uploadedBy: user.id,
      uploadedAt: now,
      confirmedBy: user.id,
      now,
    });
    console.log(
      `  store the version (rows and binary columns): ${((performance.now() - tStore) / 1000).toFixed(2)} s`,
    );
    const [version] = await database.db
      .select()
      .from(datasetVersions)
      .where(eq(datasetVersions.id, stored.id));
    const textOnly = await copyAsStoredBefore(database.db, version);
    for (let run = 1; run <= 2; run++) {
      for (const [v, form] of [
        [version, "binary columns"],
        [textOnly, "rows' text, as stored before 0017"],
      ] as const) {
        const delay = monitorEventLoopDelay({ resolution: 10 });
        delay.enable();
        const t0 = performance.now();
        await loadBrainTable(database.db, v);
        const ms = performance.now() - t0;
        delay.disable();
        console.log(
          `  load for a fit from ${form}, run ${run}: ${(ms / 1000).toFixed(2)} s; longest event-loop stretch ${(delay.max / 1e6).toFixed(0)} ms`,
        );
      }
    }
    console.log(
      `  machine load average (1, 5, 15 min): ${os
        .loadavg()
        .map((l) => l.toFixed(2))
        .join(", ")}`,
    );
  } finally {
    await intakeJobs().close();
    await database.close();
    rmSync(dataDir, { recursive: true, force: true });
  }
}
