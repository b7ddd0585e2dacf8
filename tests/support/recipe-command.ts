/**
 * Runs the recipe command as a lab pipeline would: a child process on
 * server/cli/fit.ts (or through `npm run --silent fit --`), collecting its
 * exit code, stdout and stderr.
 */
import { spawn } from "node:child_process";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";

export const projectRoot = join(dirname(fileURLToPath(import.meta.url)), "..", "..");

export interface CommandRun {
  code: number | null;
  stdout: string;
  stderr: string;
}

export function runRecipeCommand(
  args: readonly string[],
  options: { viaNpm?: boolean } = {},
): Promise<CommandRun> {
  return new Promise((resolve, reject) => {
    const child = options.viaNpm
      ? spawn("npm", ["run", "--silent", "fit", "--", ...args], {
          cwd: projectRoot,
          stdio: ["ignore", "pipe", "pipe"],
        })
      : spawn(
          process.execPath,
          ["--import", "tsx", join(projectRoot, "server", "cli", "fit.ts"), ...args],
          { cwd: projectRoot, stdio: ["ignore", "pipe", "pipe"] },
        );
    let stdout = "";
    let stderr = "";
    child.stdout.on("data", (chunk: Buffer) => {
      stdout += chunk.toString();
    });
    child.stderr.on("data", (chunk: Buffer) => {
      stderr += chunk.toString();
    });
    child.on("error", reject);
    child.on("close", (code) => resolve({ code, stdout, stderr }));
  });
}
