/**
 * SHA-256 content hash (FIPS 180-4) of an uploaded file, as lower-case hex.
 * Versions and recipes name their inputs by this hash. Cost: O(bytes).
 */
import { createHash } from "node:crypto";

export function sha256Hex(content: Uint8Array | string): string {
  return createHash("sha256").update(content).digest("hex");
}
