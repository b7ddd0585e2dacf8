/**
 * Intake speed: a 2,000 participants × 400 regions brain table (≈ 8 MB CSV)
 * and a participant sheet, through the same steps as an upload — read
 * (decode, delimiter, papaparse), preview (types, identifier guard),
 * confirm (typed brain table / sheet), join (roster, FitData), SHA-256.
 * Then the whole upload through the data service, storage included: the
 * upload request (read, check, preview) and the confirm request (read
 * again, type, store the version and its rows in one transaction) for both
 * files, on a migrated database in a temporary directory on disk, as the
 * server keeps it.
 * Target for the whole upload: ≤ 3 s on this machine.
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

const PARTICIPANTS = 2000;
const REGIONS = 400;

function makeFiles(): { brain: Uint8Array; sheet: Uint8Array } {
  const rng = createRng(4242);
  const header = ["participant_id", ...Array.from({ length: REGIONS }, (_, r) => `region_${String(r + 1).padStart(3, "0")}`)];
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
  const { brain, sheet } = makeFiles();
  console.log(
    `brain table ${PARTICIPANTS} × ${REGIONS}: ${(brain.byteLength / 1e6).toFixed(1)} MB; sheet ${(sheet.byteLength / 1e3).toFixed(0)} kB`,
  );
  console.log(`machine load (1-minute average): ${os.loadavg()[0].toFixed(1)}`);
  const totals: number[] = [];
  for (let run = 1; run <= 3; run++) {
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
      if (confirmed.b.kind !== "brain" || confirmed.s.kind !== "participants") throw new Error("unexpected kinds");
      return buildFitData(confirmed.b.brain, confirmed.s.sheet);
    });
    const total = tUpload + tRead + tReadSheet + tConfirm + tJoin;
    totals.push(total);
    console.log(
      `run ${run}: upload (read, preview, sha256) ${tUpload.toFixed(0)} ms · confirm: read ${(tRead + tReadSheet).toFixed(0)} ms, type and check ${tConfirm.toFixed(0)} ms, join ${tJoin.toFixed(0)} ms · total ${total.toFixed(0)} ms`,
    );
  }
  const median = [...totals].sort((a, b) => a - b)[1];
  console.log(`parse + validate + join, both requests (median of 3): ${median.toFixed(0)} ms (no storage)`);

  const dataDir = mkdtempSync(join(tmpdir(), "covarion-bench-"));
  const database = await openDatabase({ dataDir });
  try {
    await migrateDatabase(database.db);
    const [user] = await database.db.insert(users).values({ email: "bench@lab.example", name: "Bench" }).returning();
    const person = { id: user.id, name: user.name, email: user.email };
    const store = new PreviewStore();
    const whole: number[] = [];
    for (let run = 1; run <= 3; run++) {
      const [study] = await database.db.insert(studies).values({ name: `Bench ${randomUUID()}`, createdBy: user.id }).returning();
      const now = new Date();
      const t0 = performance.now();
      const pb = previewUpload(store, { studyId: study.id, kind: "brain", fileName: "brain.csv", bytes: brain, options: {}, uploader: person, now });
      const ps = previewUpload(store, { studyId: study.id, kind: "participants", fileName: "participants.tsv", bytes: sheet, options: {}, uploader: person, now });
      const t1 = performance.now();
      await confirmUpload(database.db, store, { studyId: study.id, datasetId: pb.id, actor: person, confirmation: {}, now });
      await confirmUpload(database.db, store, { studyId: study.id, datasetId: ps.id, actor: person, confirmation: {}, now });
      const t2 = performance.now();
      whole.push(t2 - t0);
      console.log(`stored run ${run}: upload requests ${(t1 - t0).toFixed(0)} ms · confirm requests with storage ${(t2 - t1).toFixed(0)} ms · total ${(t2 - t0).toFixed(0)} ms`);
    }
    const m = [...whole].sort((a, b) => a - b)[1];
    console.log(`whole upload of both files, storage included (median of 3): ${m.toFixed(0)} ms — target ≤ 3000 ms`);
  } finally {
    await database.close();
    rmSync(dataDir, { recursive: true, force: true });
  }
}
