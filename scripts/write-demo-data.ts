/**
 * Writes the demo study's files into assets/demo/ from the seeded generator
 * (db/seed/demo-data.ts). Run after changing the generator:
 * `npx tsx scripts/write-demo-data.ts`; a unit test checks the committed
 * files equal the generator's output byte for byte.
 */
import { writeFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { generateDemoFiles } from "../db/seed/demo-data";

const folder = join(dirname(fileURLToPath(import.meta.url)), "..", "assets", "demo");
const files = generateDemoFiles();
writeFileSync(join(folder, files.brainFileName), files.brainCsv);
writeFileSync(join(folder, files.sheetFileName), files.participantsTsv);
console.log(`wrote ${files.brainFileName} and ${files.sheetFileName} to assets/demo/`);
