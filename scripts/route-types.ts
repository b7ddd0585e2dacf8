/**
 * Writes `.expo/types/router.d.ts`, the route types that make every `href`
 * and `router.push` in the web app checked against the files in app/
 * (Expo Router's typed routes). Expo's development server writes the same
 * file as it watches app/; the type check (`npm run typecheck`,
 * scripts/test.sh) cannot wait for one, so this runs Expo's own generator
 * (shipped inside the Expo command-line package) on app/ first.
 *
 *   npx tsx scripts/route-types.ts
 */
import { mkdirSync, writeFileSync } from "node:fs";
import { createRequire } from "node:module";
import { dirname, join } from "node:path";
import { projectRoot } from "./web-build";

const appRoot = join(projectRoot, "app");
const outDir = join(projectRoot, ".expo", "types");

// Expo's generator lives in a package of Expo's command-line tool; find it the way that tool does.
const fromProject = createRequire(join(projectRoot, "package.json"));
const fromExpo = createRequire(fromProject.resolve("expo/package.json"));
const fromCli = createRequire(fromExpo.resolve("@expo/cli/package.json"));
const generatorPath = fromCli.resolve("@expo/router-server/build/typed-routes/generate.js");
const fromGenerator = createRequire(generatorPath);
const { getTypedRoutesDeclarationFile } = fromGenerator(generatorPath) as {
  getTypedRoutesDeclarationFile: (ctx: unknown) => string | undefined;
};
const { requireContext } = fromGenerator("expo-router/internal/testing") as {
  requireContext: (root: string, recursive: boolean, ignore: RegExp) => unknown;
};
const { EXPO_ROUTER_CTX_IGNORE } = fromGenerator("expo-router/_ctx-shared") as {
  EXPO_ROUTER_CTX_IGNORE: RegExp;
};

const file = getTypedRoutesDeclarationFile(requireContext(appRoot, true, EXPO_ROUTER_CTX_IGNORE));
if (!file) throw new Error("route-types: Expo's generator found no routes in app/");
mkdirSync(outDir, { recursive: true });
writeFileSync(join(outDir, "router.d.ts"), file);
console.log(`route types written for ${dirname(outDir)}`.replace(projectRoot, "."));
