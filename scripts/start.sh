#!/usr/bin/env bash
# npm start: set everything up, then serve the production build. Ctrl-C stops the app and what this script started.
set -euo pipefail
cd "$(dirname "$0")/.."
say() { printf 'bandledger: %s\n' "$*" >&2; }
bash scripts/setup.sh

export NODE_ENV=production
export PORT=${PORT:-3000}
export HOST=${HOST:-127.0.0.1}
export BANDLEDGER_PUBLIC_URL=${BANDLEDGER_PUBLIC_URL:-http://$HOST:$PORT}
. scripts/mailbox-default.sh

pids=()
started_db=0
cleanup() {
  trap - INT TERM EXIT
  for p in "${pids[@]}"; do kill "$p" 2>/dev/null || true; done
  for p in "${pids[@]}"; do wait "$p" 2>/dev/null || true; done
  if [ "$started_db" = 1 ]; then bash scripts/db.sh stop || true; fi
}
trap cleanup INT TERM EXIT

if [ -n "${DATABASE_URLS:-}" ]; then
  # A cluster: its runtime account cannot change the schema; `npm run cluster -- migrate` migrates through one node.
  say "using the database cluster in DATABASE_URLS (migrations and demo data: npm run cluster -- migrate)"
else
  if [ -z "${DATABASE_URL:-}" ]; then
    if ! bash scripts/db.sh status >/dev/null 2>&1; then started_db=1; fi
    bash scripts/db.sh start
  fi
  npx tsx app/.server/db/migrate-cli.ts
  npx tsx seed-data/load.ts --if-empty
fi
say "building the app"
npx react-router build >/dev/null

if [ -z "${SMTP_URL:-}" ]; then
  node --import tsx app/.server/mail/sink-cli.ts &
  pids+=($!)
fi

# One worker process per core (BANDLEDGER_WORKERS to choose), all on one port; see server/main.ts.
node --import tsx server/main.ts >>"${BANDLEDGER_LOG:-.data/app.log}" 2>&1 &
pids+=($!)
for _ in $(seq 1 100); do
  if curl -fsS -o /dev/null "http://$HOST:$PORT/healthz" 2>/dev/null; then break; fi
  kill -0 "${pids[-1]}" 2>/dev/null || { say "the app stopped during start; see ${BANDLEDGER_LOG:-.data/app.log}"; exit 1; }
  sleep 0.2
done
cat >&2 <<MSG

  Bandledger is serving on $BANDLEDGER_PUBLIC_URL with ${BANDLEDGER_WORKERS:-$(nproc)} worker processes  (request log: ${BANDLEDGER_LOG:-.data/app.log})
  Sign in to the demo with one of the team's addresses, e.g. ines.carvalho@kestrel-devices.test (admin)
  or ravi.menon@kestrel-devices.test (lead); $( [ "$BANDLEDGER_MAILBOX" = on ] && echo "the code arrives in the local mailbox at $BANDLEDGER_PUBLIC_URL/dev/mailbox (open it in a browser on this machine)" || echo "the code is mailed through ${SMTP_URL:-the local sink} (the local mailbox page is off)" )
  Ctrl-C stops the app and the database it started.

MSG
wait "${pids[-1]}"
