#!/usr/bin/env bash
# Every check the project has: types, lint, then unit, API (on the embedded database and on a
# throw-away PostgreSQL server, installed with apt when missing) and browser tests.
set -euo pipefail
cd "$(dirname "$0")/.."
echo "== typecheck =="
npm run --silent typecheck
echo "== lint =="
npx biome check .
echo "== tests (unit, api, api-pg, e2e) =="
mkdir -p tests/.tmp
status=0
npx vitest run --reporter=default --reporter=json --outputFile.json=tests/.tmp/results.json "$@" || status=$?
node -e '
  const r = JSON.parse(require("fs").readFileSync("tests/.tmp/results.json", "utf8"));
  console.log(`${r.numPassedTests} passed, ${r.numFailedTests} failed` + (r.numPendingTests ? `, ${r.numPendingTests} skipped` : ""));
' || true
exit $status
