/**
 * The upload limits are settings: MAX_UPLOAD_MB (default 50, at most 2048)
 * and MAX_UPLOAD_COLUMNS (default 20,000), each refused with a message that
 * names the variable.
 */
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { loadConfig } from "../../server/config";

const dirs: string[] = [];
function dataDir(): string {
  const dir = mkdtempSync(join(tmpdir(), "covarion-upload-config-"));
  dirs.push(dir);
  return dir;
}
afterAll(() => {
  for (const d of dirs) rmSync(d, { recursive: true, force: true });
});

describe("upload limits", () => {
  it("default to 50 MB and 20,000 columns", () => {
    expect(loadConfig({ DATA_DIR: dataDir() }).uploads).toEqual({
      maxBytes: 50 * 1024 * 1024,
      maxColumns: 20_000,
    });
  });

  it("are read from MAX_UPLOAD_MB and MAX_UPLOAD_COLUMNS", () => {
    expect(
      loadConfig({ DATA_DIR: dataDir(), MAX_UPLOAD_MB: "2048", MAX_UPLOAD_COLUMNS: "1500" })
        .uploads,
    ).toEqual({ maxBytes: 2048 * 1024 * 1024, maxColumns: 1500 });
  });

  it.each([
    ["MAX_UPLOAD_MB", "0"],
    ["MAX_UPLOAD_MB", "2049"],
    ["MAX_UPLOAD_MB", "1.5"],
    ["MAX_UPLOAD_MB", "lots"],
    ["MAX_UPLOAD_COLUMNS", "1"],
    ["MAX_UPLOAD_COLUMNS", "many"],
  ])("refuse %s=%s naming the variable", (name, value) => {
    expect(() => loadConfig({ DATA_DIR: dataDir(), [name]: value })).toThrow(
      new RegExp(`^Configuration error: ${name} is invalid`),
    );
  });
});
