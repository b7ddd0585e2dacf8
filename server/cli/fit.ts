/**
 * The recipe command: `npm run --silent fit -- path/to/recipe.json`.
 *
 * Reads the recipe and the files it names (relative to the recipe's
 * folder), parses and joins them with the app's intake library, fits with
 * the app's `runFit`, and prints one JSON document on stdout:
 * `{ regions, participants, notes, …, roster, recipe }`, where `recipe` is
 * the recipe with every default filled in, the software version and the
 * SHA-256 of each input file. The same recipe and files give the same bytes.
 *
 * Exit codes: 0 success; 2 bad input (the recipe, a file, or a fit
 * precondition) with one line on stderr naming the file, row and column or
 * the key at fault; 1 any other failure (a fault of the program).
 */
import { basename } from "node:path";
import { StatsError } from "../stats/errors";
import { IntakeError } from "../intake";
import { RecipeError, runRecipe } from "./recipe";

function oneLine(text: string): string {
  return text.replace(/\s*[\r\n]+\s*/g, " ").trim();
}

async function main(argv: readonly string[]): Promise<number> {
  const args = argv.filter((a) => a !== "--");
  if (args.length !== 1 || args[0].startsWith("-")) {
    process.stderr.write("usage: npm run --silent fit -- path/to/recipe.json\n");
    return 2;
  }
  try {
    const output = await runRecipe(args[0]);
    process.stdout.write(`${JSON.stringify(output, null, 2)}\n`);
    return 0;
  } catch (e) {
    if (e instanceof RecipeError || e instanceof IntakeError) {
      process.stderr.write(`${oneLine(e.message)}\n`);
      return 2;
    }
    if (e instanceof StatsError) {
      process.stderr.write(`${basename(args[0])}: ${oneLine(e.message)}\n`);
      return 2;
    }
    process.stderr.write(
      `internal error: ${oneLine(e instanceof Error ? e.message : String(e))}\n`,
    );
    return 1;
  }
}

process.exitCode = await main(process.argv.slice(2));
