/**
 * Running a recipe from files (the recipe command). The recipe's keys and
 * their meaning live in contract/recipe.ts, shared with the app.
 *
 * Paths are relative to the recipe's folder. Reading the files is the only
 * I/O; they are read as the app reads an upload (server/jobs/intake-file.ts:
 * a gzip-compressed `.csv.gz` / `.tsv.gz` is decompressed, under the same
 * MAX_UPLOAD_MB and MAX_UPLOAD_COLUMNS limits), and parsing, joining and
 * fitting use the same intake library and the same `runFit` as the app.
 */
import { readFileSync } from "node:fs";
import { basename, dirname, resolve } from "node:path";
import { fileURLToPath } from "node:url";
import { buildRecipe, type Recipe, recipeSchema, specOfRecipe } from "../../contract/recipe";
import type { FitResult, ModelSpec } from "../../contract/spec";
import { ConfigError, loadUploadLimits } from "../config";
import { readUpload } from "../jobs/intake-file";
import { requireStandardErrors } from "./standard-error-check";
import {
  IntakeError,
  buildBrainTable,
  buildFitData,
  buildParticipantSheet,
  problem,
  sha256Hex,
  type ParticipantSheet,
} from "../intake";

/** A fault in the recipe or its files: the command prints `message` as one line and exits with code 2. */
export class RecipeError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "RecipeError";
  }
}

/** The software version written into every recipe (package.json `version`). */
export function softwareVersion(): string {
  const pkg = JSON.parse(
    readFileSync(fileURLToPath(new URL("../../package.json", import.meta.url)), "utf8"),
  ) as {
    version: string;
  };
  return pkg.version;
}

/** The recipe JSON document checked against the schema; throws RecipeError naming the key at fault. */
export function parseRecipe(text: string, recipeName: string): Recipe {
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    throw new RecipeError(`${recipeName}: invalid JSON (${(e as Error).message})`);
  }
  if (json === null || typeof json !== "object" || Array.isArray(json)) {
    throw new RecipeError(`${recipeName}: a recipe must be a JSON object`);
  }
  const parsed = recipeSchema.safeParse(json);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const path = issue.path.map(String).join(".");
    if (issue.code === "unrecognized_keys") {
      const keys = issue.keys.map((k) => `"${path ? `${path}.` : ""}${k}"`).join(", ");
      throw new RecipeError(`${recipeName}: unknown key ${keys}`);
    }
    if (path === "") throw new RecipeError(`${recipeName}: ${issue.message}`);
    throw new RecipeError(`${recipeName}: key "${path}": ${issue.message}`);
  }
  return parsed.data;
}

function readInput(recipeDir: string, file: string, what: string): Uint8Array {
  try {
    return readFileSync(resolve(recipeDir, file));
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (code === "ENOENT")
      throw new RecipeError(
        `${file}: ${what} file not found (paths are relative to the recipe's folder)`,
      );
    if (code === "EISDIR") throw new RecipeError(`${file}: ${what} is a folder, not a file`);
    throw new RecipeError(`${file}: ${what} file cannot be read (${code ?? (e as Error).message})`);
  }
}

function checkHash(
  file: string,
  bytes: Uint8Array,
  expected: { file: string; sha256: string } | undefined,
  key: string,
): string {
  const sha256 = sha256Hex(bytes);
  if (expected === undefined) return sha256;
  if (expected.file !== file) {
    throw new RecipeError(
      `recipe key "inputs.${key}.file" is "${expected.file}" but "${key}" names "${file}"`,
    );
  }
  if (expected.sha256 !== sha256) {
    throw new RecipeError(
      `${file}: content differs from the recipe (SHA-256 ${sha256.slice(0, 12)}… instead of ${expected.sha256.slice(0, 12)}…); the recipe was made from other data`,
    );
  }
  return sha256;
}

function requireColumn(sheet: ParticipantSheet, name: string, key: string): void {
  if (sheet.columns.some((c) => c.name === name)) return;
  const names = sheet.columns
    .map((c) => c.name)
    .slice(0, 12)
    .join(", ");
  throw new IntakeError(422, [
    problem(
      sheet.file,
      "unknown_column",
      `no column named "${name}" (recipe key ${key}); the sheet has: ${sheet.idColumn}, ${names}`,
      {
        row: 1,
      },
    ),
  ]);
}

/**
 * The intake's refusals as a recipe's author can act on them: a brain-table
 * column the intake will not leave out without a decision (the same rule
 * as at upload) is decided in a recipe by naming the regions to read.
 */
function withRecipeHints<T>(read: () => T): T {
  try {
    return read();
  } catch (e) {
    if (!(e instanceof IntakeError) || !e.problems.some((p) => p.code === "column_left_out"))
      throw e;
    const hint =
      ' (in a recipe: name the regions to read under "regions"; every other column is then left out)';
    const problems = e.problems.map((p) =>
      p.code === "column_left_out" ? { ...p, message: `${p.message}${hint}` } : p,
    );
    throw new IntakeError(e.status, problems, e.problemCount);
  }
}

export interface RecipeOutput {
  [key: string]: unknown;
  regions: FitResult["regions"];
  participants: FitResult["participants"];
  roster: {
    matched: number;
    onlyInBrainTable: string[];
    onlyInParticipantSheet: string[];
    duplicates: { file: string; key: string; ids: string[] }[];
    nearMisses: { brainId: string; sheetId: string; reason: string }[];
    rule: string | null;
  };
  recipe: Recipe;
}

/**
 * Reads the recipe at `recipePath` and its files, fits, and returns the
 * output document. Throws RecipeError and IntakeError (bad recipe or files)
 * and StatsError (the fit's preconditions); anything else is a fault of the
 * program.
 */
export async function runRecipe(recipePath: string): Promise<RecipeOutput> {
  const recipeName = basename(recipePath);
  let text: string;
  try {
    text = readFileSync(recipePath, "utf8");
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new RecipeError(
      code === "ENOENT"
        ? `${recipeName}: recipe file not found`
        : `${recipeName}: recipe cannot be read (${code ?? (e as Error).message})`,
    );
  }
  const recipe = parseRecipe(text, recipeName);
  const dir = dirname(recipePath);

  const needsSheet =
    recipe.kind === "two-group" ||
    recipe.kind === "association" ||
    recipe.kind === "specification-curve" ||
    recipe.covariates.length > 0 ||
    recipe.mappings.length > 0;
  if (needsSheet && recipe.participantSheet === undefined) {
    const why =
      recipe.kind === "two-group" ||
      recipe.kind === "association" ||
      recipe.kind === "specification-curve"
        ? `kind "${recipe.kind}"`
        : recipe.mappings.length > 0
          ? "mappings"
          : "covariates";
    throw new RecipeError(`${recipeName}: key "participantSheet" is required for ${why}`);
  }
  if (recipe.inputs?.participantSheet && recipe.participantSheet === undefined) {
    throw new RecipeError(
      `${recipeName}: key "inputs.participantSheet" is given but "participantSheet" is not`,
    );
  }

  const brainBytes = readInput(dir, recipe.brainTable, "brain table");
  const sheetBytes =
    recipe.participantSheet === undefined
      ? null
      : readInput(dir, recipe.participantSheet, "participant sheet");
  const brainSha = checkHash(
    recipe.brainTable,
    brainBytes,
    recipe.inputs?.brainTable,
    "brainTable",
  );
  const sheetSha =
    sheetBytes === null || recipe.participantSheet === undefined
      ? null
      : checkHash(
          recipe.participantSheet,
          sheetBytes,
          recipe.inputs?.participantSheet,
          "participantSheet",
        );

  let limits: ReturnType<typeof loadUploadLimits>;
  try {
    limits = loadUploadLimits();
  } catch (e) {
    if (e instanceof ConfigError) throw new RecipeError(e.message);
    throw e;
  }
  const brainRaw = (await readUpload({ bytes: brainBytes }, recipe.brainTable, limits)).table;
  const brain = withRecipeHints(() =>
    buildBrainTable(brainRaw, {
      idColumn: recipe.idColumn,
      seSuffix: recipe.seSuffix,
      regions: recipe.regions,
    }),
  );
  let sheet: ParticipantSheet | null = null;
  if (sheetBytes !== null && recipe.participantSheet !== undefined) {
    const sheetRaw = (await readUpload({ bytes: sheetBytes }, recipe.participantSheet, limits))
      .table;
    sheet = buildParticipantSheet(sheetRaw, {
      idColumn: recipe.idColumn,
    });
    if (recipe.predictor !== undefined) requireColumn(sheet, recipe.predictor, "predictor");
    if (recipe.group !== undefined) requireColumn(sheet, recipe.group, "group");
    for (const c of recipe.covariates) requireColumn(sheet, c, "covariates");
  }
  const built = buildFitData(brain, sheet, { session: recipe.session, mappings: recipe.mappings });
  if (recipe.weights === "first-level-se") {
    requireStandardErrors({
      raw: brainRaw,
      brain,
      data: built.data,
      session: built.session,
      setAside: recipe.setAside,
    });
  }

  // The recipe's model fields, with the regions read named (every region when it named none).
  const spec: ModelSpec = { ...specOfRecipe(recipe), regions: [...built.data.regions] };
  // Loaded only now, so a bad recipe or file is reported without loading the engine.
  const { runFit } = await import("../stats/run-fit");
  const result = runFit(spec, built.data);

  const roster = built.roster;
  const filled = buildRecipe({
    brainTable: { file: recipe.brainTable, sha256: brainSha },
    participantSheet:
      sheetSha !== null && recipe.participantSheet !== undefined
        ? { file: recipe.participantSheet, sha256: sheetSha }
        : null,
    idColumn: recipe.idColumn,
    seSuffix: recipe.seSuffix,
    session: built.session,
    mappings: recipe.mappings,
    spec,
    softwareVersion: softwareVersion(),
  });
  return {
    ...result,
    roster: {
      matched: roster === null ? built.data.participants.length : roster.matched.length,
      onlyInBrainTable: roster?.onlyInBrainTable ?? [],
      onlyInParticipantSheet: roster?.onlyInParticipantSheet ?? [],
      duplicates: (roster?.duplicates ?? []).map((d) => ({ file: d.file, key: d.key, ids: d.ids })),
      nearMisses: roster?.nearMisses ?? [],
      rule: roster?.rule ?? null,
    },
    recipe: filled,
  };
}
