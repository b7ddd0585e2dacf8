import { defineConfig } from "vitest/config";

export default defineConfig({
  test: {
    projects: [
      {
        test: {
          name: "unit",
          include: ["tests/unit/**/*.test.ts"],
          environment: "node",
        },
      },
      {
        test: {
          name: "api",
          include: ["tests/api/**/*.test.ts"],
          environment: "node",
          globalSetup: ["tests/api/global-setup.ts"],
          testTimeout: 30000,
          hookTimeout: 60000,
        },
      },
      {
        // The same API tests on a PostgreSQL server (DATABASE_URL's path): the global set-up
        // starts a throw-away server and each test app gets a fresh copy of a migrated template.
        test: {
          name: "api-pg",
          // tests/api-pg: what only a server has (several processes, migrations racing, LISTEN/NOTIFY).
          include: ["tests/api/**/*.test.ts", "tests/api-pg/**/*.test.ts"],
          exclude: [
            // Settings only, no database: nothing differs on a server.
            "tests/api/config.test.ts",
            "tests/api/upload-limits-config.test.ts",
            // The embedded database's own rules: its data directory and lock, and the
            // read cache's write tracking on the PGlite instance (bypassed on a server).
            "tests/api/data-dir.test.ts",
            "tests/api/read-cache.test.ts",
            // These open the embedded template themselves to build a production-mode app.
            "tests/api/host-poisoning.test.ts",
            "tests/api/production.test.ts",
            "tests/api/web-build.test.ts",
          ],
          environment: "node",
          globalSetup: ["tests/api/pg-global-setup.ts"],
          testTimeout: 30000,
          hookTimeout: 120000,
        },
      },
      {
        test: {
          name: "e2e",
          include: ["tests/e2e/**/*.test.ts"],
          environment: "node",
          globalSetup: ["tests/e2e/global-setup.ts"],
          testTimeout: 120000,
          hookTimeout: 300000,
          fileParallelism: false,
        },
      },
    ],
  },
});
