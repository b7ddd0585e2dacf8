/**
 * Stores the demo study's brain table and participant sheet (the seeded
 * generator's files, see demo-data.ts) as confirmed versions, through the
 * same `storeVersion` path an upload's confirmation takes — read, checked,
 * typed, stored as rows, audited. The demo files hold no identifier
 * columns, so nothing needs a decision. The near miss (7 / sub-07) is left
 * for people to find and map.
 */
import { randomUUID } from "node:crypto";
import { storeVersion } from "../../server/services/datasets";
import type { SeedDemoDatasets } from "./index";
import { DEMO_SEED, generateDemoFiles } from "./demo-data";

export const seedDemoDatasets: SeedDemoDatasets = async (db, { studyId, uploadedBy, now }) => {
  const files = generateDemoFiles(DEMO_SEED);
  const encoder = new TextEncoder();
  await storeVersion(db, {
    id: randomUUID(),
    studyId,
    kind: "brain",
    fileName: files.brainFileName,
    bytes: encoder.encode(files.brainCsv),
    confirmation: {},
    uploadedBy,
    uploadedAt: now,
    confirmedBy: uploadedBy,
    now,
  });
  await storeVersion(db, {
    id: randomUUID(),
    studyId,
    kind: "participants",
    fileName: files.sheetFileName,
    bytes: encoder.encode(files.participantsTsv),
    confirmation: {},
    uploadedBy,
    uploadedAt: now,
    confirmedBy: uploadedBy,
    now,
  });
};
