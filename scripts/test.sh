#!/usr/bin/env bash
# npm test: the same set-up as npm start (against test databases), then type-check, unit, integration, browser,
# reliability and cluster tests. The three-node cluster starts in the background while the code is type-checked.
set -euo pipefail
cd "$(dirname "$0")/.."
say() { printf 'bandledger test: %s\n' "$*" >&2; }
bash scripts/setup.sh --browser

started_db=0
if [ -z "${TEST_DATABASE_URL:-}" ]; then
  if ! bash scripts/db.sh status >/dev/null 2>&1; then started_db=1; fi
  bash scripts/db.sh start
fi

# The cluster project runs unless the arguments pick other projects only.
want_cluster=1
args=" $* "
if [[ "$args" == *" --project"* ]] && [[ "$args" != *" --project cluster "* ]] && [[ "$args" != *" --project=cluster "* ]]; then want_cluster=0; fi
started_cluster=0
cluster_pid=""
cluster_log=.data/cluster-start.log
if [ "$want_cluster" = 1 ]; then
  if ! bash scripts/cluster.sh status >/dev/null 2>&1; then started_cluster=1; fi
  mkdir -p .data
  say "starting the three-node database cluster in the background (log: $cluster_log)"
  bash scripts/cluster.sh start >"$cluster_log" 2>&1 &
  cluster_pid=$!
fi
cleanup() {
  if [ -n "$cluster_pid" ]; then wait "$cluster_pid" 2>/dev/null || true; fi
  if [ "$started_cluster" = 1 ]; then bash scripts/cluster.sh stop 2>/dev/null || true; fi
  if [ "$started_db" = 1 ]; then bash scripts/db.sh stop || true; fi
}
trap cleanup EXIT

say "type-checking"
npx react-router typegen
npx tsc
say "building"
npx react-router build >/dev/null
if [ -n "$cluster_pid" ]; then
  if wait "$cluster_pid"; then
    tail -n 1 "$cluster_log" >&2
  else
    say "the cluster did not start (the cluster tests will say why); last lines of $cluster_log:"
    tail -n 5 "$cluster_log" >&2 || true
  fi
  cluster_pid=""
fi
say "running the tests"
npx vitest run "$@"
