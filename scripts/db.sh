#!/usr/bin/env bash
# The embedded MariaDB: a project-local server on loopback, from Debian's packages.
# usage: scripts/db.sh start|stop|status|url [database] [runtime|migrate]|ensure-databases
# Three accounts: root only through the Unix socket (no password over TCP); bandledger_migrate, which owns the
# schema (migrations, triggers, test databases, restores); bandledger, the runtime account of the app, which
# may read and write rows but never change the schema, and only append to the audit log, revisions and releases
# (its table grants are given by the migration step, app/.server/db/grants.ts).
set -euo pipefail
cd "$(dirname "$0")/.."
ROOT=$(pwd)
DATA_DIR=${BANDLEDGER_DATA_DIR:-$ROOT/.data}
DB_DIR=$DATA_DIR/mariadb
RUN_DIR=$DATA_DIR/run
PORT=${BANDLEDGER_DB_PORT:-3407}
SOCK=$RUN_DIR/mariadb.sock
PID_FILE=$RUN_DIR/mariadb.pid
LOG=$DATA_DIR/mariadb.log
APP_USER=bandledger
PASS_FILE=$DATA_DIR/db-password
MIGRATE_USER=bandledger_migrate
MIGRATE_PASS_FILE=$DATA_DIR/db-migrate-password

say() { printf 'bandledger db: %s\n' "$*" >&2; }

install_server() {
  if ! command -v mariadbd >/dev/null 2>&1 && [ ! -x /usr/sbin/mariadbd ]; then
    say "installing mariadb-server from Debian's packages"
    export DEBIAN_FRONTEND=noninteractive
    apt-get update -qq >/dev/null
    apt-get install -y -qq mariadb-server mariadb-client >/dev/null
  fi
  export PATH=$PATH:/usr/sbin
}

client() { mariadb --no-defaults --protocol=socket --socket="$SOCK" -uroot "$@"; }
ping_db() { mariadb-admin --no-defaults --protocol=socket --socket="$SOCK" -uroot ping >/dev/null 2>&1; }

running_pid() {
  [ -f "$PID_FILE" ] || return 1
  local pid; pid=$(cat "$PID_FILE" 2>/dev/null || true)
  [ -n "$pid" ] && kill -0 "$pid" 2>/dev/null && grep -q mariadbd "/proc/$pid/cmdline" 2>/dev/null && { echo "$pid"; return 0; }
  return 1
}

port_taken() {
  (exec 3<>"/dev/tcp/127.0.0.1/$PORT") 2>/dev/null
}

start() {
  install_server
  mkdir -p "$DB_DIR" "$RUN_DIR"
  if pid=$(running_pid) && ping_db; then
    say "already running (pid $pid, port $PORT)"
    ensure_databases
    return 0
  fi
  if [ -f "$PID_FILE" ] || [ -S "$SOCK" ]; then
    say "removing a stale pid file or socket left by an earlier run"
    rm -f "$PID_FILE" "$SOCK" "$SOCK.lock"
  fi
  if port_taken; then
    say "port $PORT on 127.0.0.1 is taken by another program; set BANDLEDGER_DB_PORT to a free port"
    exit 1
  fi
  if [ ! -d "$DB_DIR/mysql" ]; then
    say "initialising a new data directory in $DB_DIR"
    mariadb-install-db --no-defaults --datadir="$DB_DIR" --user=root \
      --auth-root-authentication-method=socket --skip-test-db --skip-name-resolve \
      --cross-bootstrap >"$DATA_DIR/mariadb-install.log" 2>&1 || { say "initialisation failed, see $DATA_DIR/mariadb-install.log"; exit 1; }
  fi
  setsid mariadbd --no-defaults --datadir="$DB_DIR" --socket="$SOCK" --pid-file="$PID_FILE" \
    --port="$PORT" --bind-address=127.0.0.1 --user=root --skip-name-resolve \
    --character-set-server=utf8mb4 --collation-server=utf8mb4_unicode_ci \
    --log-error="$LOG" --max-connections=400 --innodb-buffer-pool-size=256M \
    --innodb-flush-log-at-trx-commit=1 --log-bin-trust-function-creators=1 \
    </dev/null >/dev/null 2>&1 &
  local starter=$!
  for _ in $(seq 1 150); do
    if ping_db; then break; fi
    if ! kill -0 "$starter" 2>/dev/null; then
      say "the server stopped during start; last lines of $LOG:"
      tail -n 5 "$LOG" >&2 || true
      exit 1
    fi
    sleep 0.1
  done
  ping_db || { say "the server did not answer within 15 s; see $LOG"; exit 1; }
  say "running on 127.0.0.1:$PORT (data in $DB_DIR)"
  ensure_databases
}

password_file() {
  [ -f "$1" ] || { head -c 18 /dev/urandom | base64 | tr -d '/+=' >"$1"; chmod 600 "$1"; }
  cat "$1"
}

ensure_databases() {
  local pass migrate_pass legacy
  pass=$(password_file "$PASS_FILE")
  migrate_pass=$(password_file "$MIGRATE_PASS_FILE")
  # Data directories made before the accounts were split: root had no password over TCP, the app had ALL and SUPER.
  legacy=$(client -N -e "SELECT COUNT(*) FROM mysql.user WHERE (user = 'root' AND host <> 'localhost') OR (user = '$APP_USER' AND Super_priv = 'Y')")
  client <<SQL
CREATE DATABASE IF NOT EXISTS bandledger CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;
CREATE DATABASE IF NOT EXISTS bandledger_test CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;
DROP USER IF EXISTS 'root'@'127.0.0.1', 'root'@'::1';
ALTER USER 'root'@'localhost' IDENTIFIED VIA unix_socket;
CREATE USER IF NOT EXISTS '$MIGRATE_USER'@'127.0.0.1' IDENTIFIED BY '$migrate_pass';
ALTER USER '$MIGRATE_USER'@'127.0.0.1' IDENTIFIED BY '$migrate_pass';
GRANT ALL PRIVILEGES ON \`bandledger\`.* TO '$MIGRATE_USER'@'127.0.0.1' WITH GRANT OPTION;
GRANT ALL PRIVILEGES ON \`bandledger\\_test%\`.* TO '$MIGRATE_USER'@'127.0.0.1' WITH GRANT OPTION;
CREATE USER IF NOT EXISTS '$APP_USER'@'127.0.0.1' IDENTIFIED BY '$pass';
ALTER USER '$APP_USER'@'127.0.0.1' IDENTIFIED BY '$pass';
FLUSH PRIVILEGES;
SQL
  if [ "$legacy" != "0" ]; then
    say "splitting the database accounts: the app's account loses schema rights (the migrations grant its table rights)"
    client -e "REVOKE ALL PRIVILEGES, GRANT OPTION FROM '$APP_USER'@'127.0.0.1'; FLUSH PRIVILEGES;"
  fi
}

stop() {
  export PATH=$PATH:/usr/sbin
  if pid=$(running_pid); then
    mariadb-admin --no-defaults --protocol=socket --socket="$SOCK" -uroot shutdown 2>/dev/null || kill "$pid" 2>/dev/null || true
    for _ in $(seq 1 100); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
    say "stopped"
  else
    say "not running"
  fi
}

status() {
  export PATH=$PATH:/usr/sbin
  if pid=$(running_pid) && ping_db; then echo "running pid=$pid port=$PORT"; else echo "stopped"; return 1; fi
}

url() {
  local db=${1:-bandledger}
  [ -n "$db" ] || db=bandledger
  case "${2:-runtime}" in
    runtime) echo "mysql://$APP_USER:$(cat "$PASS_FILE")@127.0.0.1:$PORT/$db" ;;
    migrate) echo "mysql://$MIGRATE_USER:$(cat "$MIGRATE_PASS_FILE")@127.0.0.1:$PORT/$db" ;;
    *) echo "usage: scripts/db.sh url [database] [runtime|migrate]" >&2; exit 2 ;;
  esac
}

case "${1:-}" in
  start) start ;;
  stop) stop ;;
  status) status ;;
  url) url "${2:-}" "${3:-runtime}" ;;
  ensure-databases) ensure_databases ;;
  *) echo "usage: scripts/db.sh start|stop|status|url [database] [runtime|migrate]" >&2; exit 2 ;;
esac
