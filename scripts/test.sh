#!/usr/bin/env bash
# npm test: the same set-up as npm start (against test databases), then type-check, unit, integration and browser tests.
set -euo pipefail
cd "$(dirname "$0")/.."
say() { printf 'bandledger test: %s\n' "$*" >&2; }
bash scripts/setup.sh --browser

started_db=0
if [ -z "${TEST_DATABASE_URL:-}" ]; then
  if ! bash scripts/db.sh status >/dev/null 2>&1; then started_db=1; fi
  bash scripts/db.sh start
fi
cleanup() { if [ "$started_db" = 1 ]; then bash scripts/db.sh stop || true; fi; }
trap cleanup EXIT

say "type-checking"
npx react-router typegen
npx tsc
say "building"
npx react-router build >/dev/null
say "running the tests"
npx vitest run "$@"
