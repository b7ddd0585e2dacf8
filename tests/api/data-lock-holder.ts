/**
 * A process that takes the data-folder lock and holds it until it is
 * killed; the data-directory tests start it as a second server would.
 * Usage: tsx tests/api/data-lock-holder.ts <dataDir> <updateMs>
 */
import { acquireDataLock } from "../../server/services/data-lock";

const [dataDir, updateMs] = process.argv.slice(2);
await acquireDataLock(dataDir, { updateMs: Number(updateMs) });
console.log("locked");
setInterval(() => {}, 60_000);
