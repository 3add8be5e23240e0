#!/usr/bin/env bash
# A three-node MariaDB Galera cluster on loopback, from Debian's packages (mariadb-server brings galera-4).
# usage: scripts/cluster.sh start|stop|status|kill NODE|restart NODE|url NODE [database]|urls [database]
#                           |migrate-url [database [NODE]]|migrate
set -euo pipefail
cd "$(dirname "$0")/.."
ROOT=$(pwd)
DATA_DIR=${BANDLEDGER_DATA_DIR:-$ROOT/.data}
CLUSTER_DIR=$DATA_DIR/cluster
RUN_DIR=$CLUSTER_DIR/run
NODES=(1 2 3)
# Client ports BASE, BASE+1, BASE+2; node N's Galera ports are GALERA_BASE + 10(N-1) (group communication), +1 (IST), +2 (SST).
CLIENT_BASE=${BANDLEDGER_CLUSTER_PORT:-3411}
GALERA_BASE=${BANDLEDGER_GALERA_PORT:-4567}
PROVIDER=/usr/lib/galera/libgalera_smm.so
RUNTIME_USER=bandledger
MIGRATION_USER=bandledger_migrate
RUNTIME_PASS_FILE=$CLUSTER_DIR/runtime-password
MIGRATION_PASS_FILE=$CLUSTER_DIR/migration-password

say() { printf 'bandledger cluster: %s\n' "$*" >&2; }
die() { say "$*"; exit 1; }

client_port() { echo $((CLIENT_BASE + $1 - 1)); }
gcomm_port() { echo $((GALERA_BASE + 10 * ($1 - 1))); }
ist_port() { echo $(($(gcomm_port "$1") + 1)); }
sst_port() { echo $(($(gcomm_port "$1") + 2)); }
node_dir() { echo "$CLUSTER_DIR/node$1"; }
sock() { echo "$RUN_DIR/n$1.sock"; }
pid_file() { echo "$RUN_DIR/n$1.pid"; }
log_file() { echo "$CLUSTER_DIR/node$1.log"; }
cluster_address() {
  local list=() n
  for n in "${NODES[@]}"; do list+=("127.0.0.1:$(gcomm_port "$n")"); done
  local IFS=,
  echo "gcomm://${list[*]}"
}

install_packages() {
  local need=()
  command -v mariadbd >/dev/null 2>&1 || [ -x /usr/sbin/mariadbd ] || need+=(mariadb-server mariadb-client)
  [ -f "$PROVIDER" ] || need+=(galera-4)
  # A node without the cluster's data gets a copy streamed by mariadb-backup over socat (the donor keeps taking
  # writes meanwhile); the transfer script finds its ports with ss (iproute2).
  command -v mariadb-backup >/dev/null 2>&1 || need+=(mariadb-backup)
  command -v socat >/dev/null 2>&1 || need+=(socat)
  command -v ss >/dev/null 2>&1 || command -v lsof >/dev/null 2>&1 || need+=(iproute2)
  if [ ${#need[@]} -gt 0 ]; then
    say "installing ${need[*]} from Debian's packages"
    export DEBIAN_FRONTEND=noninteractive
    apt-get update -qq >/dev/null
    apt-get install -y -qq --no-install-recommends "${need[@]}" >/dev/null
  fi
  export PATH=$PATH:/usr/sbin
}

client() { local n=$1; shift; mariadb --no-defaults --protocol=socket --socket="$(sock "$n")" -uroot "$@"; }
ping_node() { mariadb-admin --no-defaults --protocol=socket --socket="$(sock "$1")" -uroot --connect-timeout=2 ping >/dev/null 2>&1; }
wsrep_status() { client "$1" -N -B -e "SHOW GLOBAL STATUS LIKE '$2'" 2>/dev/null | cut -f2; }

running_pid() {
  local f; f=$(pid_file "$1")
  [ -f "$f" ] || return 1
  local pid; pid=$(cat "$f" 2>/dev/null || true)
  [ -n "$pid" ] && kill -0 "$pid" 2>/dev/null && grep -q mariadbd "/proc/$pid/cmdline" 2>/dev/null && { echo "$pid"; return 0; }
  return 1
}
running_nodes() { local n; for n in "${NODES[@]}"; do if running_pid "$n" >/dev/null; then echo "$n"; fi; done; }
synced() { [ "$(wsrep_status "$1" wsrep_local_state_comment)" = Synced ] && [ "$(wsrep_status "$1" wsrep_ready)" = ON ]; }

port_taken() { (exec 3<>"/dev/tcp/127.0.0.1/$1") 2>/dev/null; }
check_ports() {
  local n=$1 p
  for p in "$(client_port "$n")" "$(gcomm_port "$n")" "$(ist_port "$n")" "$(sst_port "$n")"; do
    if port_taken "$p"; then
      die "port $p on 127.0.0.1 (node $n) is taken by another program; set BANDLEDGER_CLUSTER_PORT (client ports, now $CLIENT_BASE-$((CLIENT_BASE + 2))) or BANDLEDGER_GALERA_PORT (now $GALERA_BASE) to free ports"
    fi
  done
}

# Each node's options in a file of its own: the state-transfer scripts read the same file (and no other).
write_config() {
  local n=$1 g; g=$(gcomm_port "$n")
  cat >"$(config_file "$n")" <<CNF
[mysqld]
datadir=$(node_dir "$n")
socket=$(sock "$n")
pid-file=$(pid_file "$n")
port=$(client_port "$n")
bind-address=127.0.0.1
user=root
skip-name-resolve
character-set-server=utf8mb4
collation-server=utf8mb4_unicode_ci
log-error=$(log_file "$n")
max-connections=400
innodb-buffer-pool-size=128M
innodb-flush-log-at-trx-commit=1
log-bin-trust-function-creators=1
# What Galera needs: row-based replication, InnoDB only, interleaved auto-increment locks, primary keys everywhere.
binlog-format=ROW
default-storage-engine=InnoDB
enforce-storage-engine=InnoDB
innodb-autoinc-lock-mode=2
wsrep-mode=REQUIRED_PRIMARY_KEY,STRICT_REPLICATION
wsrep-on=ON
wsrep-provider=$PROVIDER
wsrep-cluster-name=bandledger
wsrep-cluster-address=$(cluster_address)
wsrep-node-name=node$n
wsrep-node-address=127.0.0.1:$g
wsrep-provider-options="gmcast.listen_addr=tcp://127.0.0.1:$g;ist.recv_addr=127.0.0.1:$(ist_port "$n");gcache.size=128M"
wsrep-sst-receive-address=127.0.0.1:$(sst_port "$n")
wsrep-sst-method=mariabackup
wsrep-slave-threads=2
wsrep-retry-autocommit=3

[sst]
sst-log-archive=0
CNF
}
config_file() { echo "$CLUSTER_DIR/node$1.cnf"; }

grastate() { echo "$(node_dir "$1")/grastate.dat"; }
has_data() { [ -d "$(node_dir "$1")/mysql" ]; }

# The node's last committed position (uuid:seqno). After a clean stop grastate.dat holds it; after a kill it says
# seqno -1 and the server recovers it from InnoDB with --wsrep-recover.
position() {
  local n=$1 f uuid seqno
  f=$(grastate "$n")
  [ -f "$f" ] || { echo ""; return; }
  uuid=$(sed -n 's/^uuid:[[:space:]]*//p' "$f")
  seqno=$(sed -n 's/^seqno:[[:space:]]*//p' "$f")
  if [ "$seqno" = "-1" ] || [ -z "$seqno" ]; then
    local log; log="$CLUSTER_DIR/node$n.recover.log"
    write_config "$n"
    : >"$log"
    mariadbd --defaults-file="$(config_file "$n")" --wsrep-recover --skip-networking --log-error="$log" >/dev/null 2>&1 || true
    local recovered; recovered=$(sed -n 's/.*WSREP: Recovered position: *//p' "$log" | tail -n 1)
    echo "$recovered"
    return
  fi
  echo "$uuid:$seqno"
}
seqno_of() { local p=$1; [ -n "$p" ] && echo "${p##*:}" || echo -2; }

# Starts one node in the background: bootstrap ("new") founds the cluster, otherwise it joins the running ones.
launch() {
  local n=$1 mode=$2 start_position=${3:-}
  mkdir -p "$(node_dir "$n")" "$RUN_DIR"
  rm -f "$(pid_file "$n")" "$(sock "$n")" "$(sock "$n").lock"
  check_ports "$n"
  write_config "$n"
  local args=(--defaults-file="$(config_file "$n")")
  [ "$mode" = new ] && args+=(--wsrep-new-cluster)
  [ -n "$start_position" ] && args+=(--wsrep-start-position="$start_position")
  LAUNCH_LOG_OFFSET=$(stat -c %s "$(log_file "$n")" 2>/dev/null || echo 0)
  setsid mariadbd "${args[@]}" </dev/null >/dev/null 2>&1 &
  LAUNCHED_PID=$!
}

# Waits until the node answers and is Synced with the cluster (a joiner first receives the state it lacks).
wait_synced() {
  local n=$1 pid=$2 timeout=${3:-180} i
  for ((i = 0; i < timeout * 5; i++)); do
    if ping_node "$n" && synced "$n"; then return 0; fi
    if ! kill -0 "$pid" 2>/dev/null; then
      say "node $n stopped during start; last lines of $(log_file "$n"):"
      tail -n 8 "$(log_file "$n")" >&2 || true
      exit 1
    fi
    sleep 0.2
  done
  die "node $n was not Synced within $timeout s; see $(log_file "$n")"
}

# How the node got the state it lacked, read from its log since it was started.
transfer_kind() {
  local n=$1 part
  part=$(tail -c +"$((LAUNCH_LOG_OFFSET + 1))" "$(log_file "$n")" 2>/dev/null || true)
  if grep -q "Proceeding with SST" <<<"$part"; then echo "full state transfer (SST, mariadb-backup)"
  elif grep -q "IST received" <<<"$part"; then
    echo "incremental state transfer (IST, $(sed -n 's/.*Receiving IST: \([0-9]*\) writesets.*/\1/p' <<<"$part" | tail -n 1) write sets)"
  else echo "no state transfer needed"; fi
}

bootstrap() {
  # The node with the newest committed position founds the cluster (node 1 when they agree or none has data).
  local best=0 best_seq=-2 n pos s
  for n in "${NODES[@]}"; do
    has_data "$n" || continue
    pos=$(position "$n")
    s=$(seqno_of "$pos")
    if [ "$s" -gt "$best_seq" ]; then best=$n; best_seq=$s; fi
  done
  if [ "$best" = 0 ]; then
    best=1
    say "initialising node 1 in $(node_dir 1)"
    mkdir -p "$(node_dir 1)"
    mariadb-install-db --no-defaults --datadir="$(node_dir 1)" --user=root \
      --auth-root-authentication-method=socket --skip-test-db --skip-name-resolve \
      --cross-bootstrap >"$CLUSTER_DIR/install.log" 2>&1 || die "initialisation failed, see $CLUSTER_DIR/install.log"
  fi
  # A clean stop marks the last node safe to bootstrap; after a crash of all three we choose the newest ourselves.
  [ -f "$(grastate "$best")" ] && sed -i 's/^safe_to_bootstrap: 0/safe_to_bootstrap: 1/' "$(grastate "$best")"
  pos=""
  [ -f "$(grastate "$best")" ] && pos=$(position "$best")
  say "bootstrapping the cluster from node $best (position ${pos:-new})"
  launch "$best" new "$pos"
  wait_synced "$best" "$LAUNCHED_PID"
  say "node $best running on 127.0.0.1:$(client_port "$best") (founded the cluster)"
}

join() {
  local n=$1 pos=""
  check_ports "$n"
  if has_data "$n"; then pos=$(position "$n"); fi
  say "node $n joining${pos:+ from position $pos}"
  launch "$n" join "$pos"
  wait_synced "$n" "$LAUNCHED_PID"
  say "node $n running on 127.0.0.1:$(client_port "$n"), $(transfer_kind "$n")"
}

wait_size() {
  local want=$1 n=$2 i
  for ((i = 0; i < 300; i++)); do
    [ "$(wsrep_status "$n" wsrep_cluster_size)" = "$want" ] && return 0
    sleep 0.2
  done
  die "the cluster did not reach $want nodes within 60 s"
}

first_synced() { local n; for n in $(running_nodes); do if ping_node "$n" && synced "$n"; then echo "$n"; return 0; fi; done; return 1; }

primary() { [ "$(wsrep_status "$1" wsrep_cluster_status)" = Primary ]; }

# Nodes run, but none is in a primary component: the others were killed or stopped, so the survivors lost quorum
# (a lone node of three stops taking writes). The running node with the newest commit founds the component again;
# this is safe here because a node that is not running cannot have gone on writing elsewhere.
ensure_primary() {
  local n i
  for ((i = 0; i < 15; i++)); do
    for n in $(running_nodes); do if ping_node "$n" && primary "$n"; then return 0; fi; done
    sleep 0.2
  done
  local best=0 best_seq=-1 s
  for n in $(running_nodes); do
    ping_node "$n" || continue
    s=$(wsrep_status "$n" wsrep_last_committed)
    if [ "${s:--1}" -gt "$best_seq" ]; then best=$n; best_seq=$s; fi
  done
  [ "$best" = 0 ] && die "running nodes do not answer; stop them (npm run cluster -- stop) and start again"
  say "no running node is in a primary component (quorum lost); node $best (last commit $best_seq) founds it again"
  client "$best" -e "SET GLOBAL wsrep_provider_options='pc.bootstrap=YES'"
  wait_synced "$best" "$(running_pid "$best")" 60
}

start() {
  install_packages
  mkdir -p "$CLUSTER_DIR" "$RUN_DIR"
  if [ -z "$(running_nodes)" ]; then bootstrap; else ensure_primary; fi
  local n
  for n in "${NODES[@]}"; do
    if running_pid "$n" >/dev/null; then
      ping_node "$n" && synced "$n" && continue
      say "node $n is running but not Synced yet; waiting"
      wait_synced "$n" "$(running_pid "$n")"
      continue
    fi
    join "$n"
  done
  local any; any=$(first_synced) || die "no node is Synced"
  wait_size 3 "$any"
  ensure_databases "$any"
  say "3 nodes Synced: $(for n in "${NODES[@]}"; do printf '127.0.0.1:%s ' "$(client_port "$n")"; done)(data in $CLUSTER_DIR)"
}

stop_node() {
  local n=$1 pid
  if pid=$(running_pid "$n"); then
    mariadb-admin --no-defaults --protocol=socket --socket="$(sock "$n")" -uroot shutdown 2>/dev/null || kill "$pid" 2>/dev/null || true
    local i
    for ((i = 0; i < 600; i++)); do kill -0 "$pid" 2>/dev/null || break; sleep 0.1; done
    kill -0 "$pid" 2>/dev/null && die "node $n did not stop within 60 s"
    say "node $n stopped"
  else
    say "node $n not running"
  fi
}

stop() {
  export PATH=$PATH:/usr/sbin
  # Node 1 last, so that it is the one marked safe to bootstrap the next start.
  local n
  for n in 3 2 1; do stop_node "$n"; done
}

kill_node() {
  local n=$1 pid
  pid=$(running_pid "$n") || { say "node $n not running"; return 0; }
  kill -KILL "$pid"
  local i
  for ((i = 0; i < 100; i++)); do kill -0 "$pid" 2>/dev/null || break; sleep 0.05; done
  say "node $n killed (SIGKILL, pid $pid)"
}

restart_node() {
  install_packages
  local n=$1
  stop_node "$n"
  if [ -z "$(running_nodes)" ]; then
    bootstrap
  else
    ensure_primary
    join "$n"
  fi
  wait_size "$(running_nodes | wc -l)" "$n"
}

status() {
  export PATH=$PATH:/usr/sbin
  local n pid all=0
  for n in "${NODES[@]}"; do
    if pid=$(running_pid "$n") && ping_node "$n"; then
      local state size primary
      state=$(wsrep_status "$n" wsrep_local_state_comment)
      size=$(wsrep_status "$n" wsrep_cluster_size)
      primary=$(wsrep_status "$n" wsrep_cluster_status)
      echo "node$n running pid=$pid port=$(client_port "$n") state=$state cluster_size=$size component=$primary"
      [ "$state" = Synced ] && [ "$size" = 3 ] && all=$((all + 1))
    else
      echo "node$n stopped port=$(client_port "$n")"
    fi
  done
  [ "$all" = 3 ]
}

# ---- accounts: kept in one place so that the embedded server's script can share the same model ------------------
# root: socket authentication only (the OS user root on this machine), never over TCP.
# migration account: owns the schema (tables, indexes, triggers) of the app and test databases; runs migrations.
# runtime account: what the app connects as. SELECT and INSERT everywhere; UPDATE and DELETE granted table by table
# by the migration command (app/.server/db/grants.ts), never on the append-only tables; no DDL, no TRIGGER, no SUPER.
ensure_accounts() {
  local n=$1
  local f
  for f in "$RUNTIME_PASS_FILE" "$MIGRATION_PASS_FILE"; do
    [ -f "$f" ] || { head -c 18 /dev/urandom | base64 | tr -d '/+=' >"$f"; chmod 600 "$f"; }
  done
  local runtime migration
  runtime=$(cat "$RUNTIME_PASS_FILE")
  migration=$(cat "$MIGRATION_PASS_FILE")
  client "$n" <<SQL
CREATE USER IF NOT EXISTS '$MIGRATION_USER'@'127.0.0.1' IDENTIFIED BY '$migration';
ALTER USER '$MIGRATION_USER'@'127.0.0.1' IDENTIFIED BY '$migration';
GRANT ALL PRIVILEGES ON \`bandledger\`.* TO '$MIGRATION_USER'@'127.0.0.1' WITH GRANT OPTION;
GRANT ALL PRIVILEGES ON \`bandledger\\_test%\`.* TO '$MIGRATION_USER'@'127.0.0.1' WITH GRANT OPTION;
CREATE USER IF NOT EXISTS '$RUNTIME_USER'@'127.0.0.1' IDENTIFIED BY '$runtime';
ALTER USER '$RUNTIME_USER'@'127.0.0.1' IDENTIFIED BY '$runtime';
GRANT SELECT, INSERT ON \`bandledger\`.* TO '$RUNTIME_USER'@'127.0.0.1';
GRANT SELECT, INSERT ON \`bandledger\\_test%\`.* TO '$RUNTIME_USER'@'127.0.0.1';
SQL
}

# -------------------------------------------------------------------------------------------------------------------

ensure_databases() {
  local n=$1
  client "$n" <<SQL
CREATE DATABASE IF NOT EXISTS bandledger CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;
CREATE DATABASE IF NOT EXISTS bandledger_test CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;
SQL
  ensure_accounts "$n"
}

url() {
  local n=${1:?node}
  echo "mysql://$RUNTIME_USER:$(cat "$RUNTIME_PASS_FILE")@127.0.0.1:$(client_port "$n")/${2:-bandledger}"
}
urls() {
  local out=() n
  for n in "${NODES[@]}"; do out+=("$(url "$n" "${1:-}")"); done
  local IFS=,
  echo "${out[*]}"
}
migrate_url() { echo "mysql://$MIGRATION_USER:$(cat "$MIGRATION_PASS_FILE")@127.0.0.1:$(client_port "${2:-1}")/${1:-bandledger}"; }

# Migrations run once, through node 1 with the migration account, while all three nodes are in the cluster; then
# the runtime account gets its table rights and an empty database gets the demo data.
migrate() {
  status >/dev/null || die "the cluster is not at full size (npm run cluster -- status); migrate with all three nodes Synced"
  local db=${1:-bandledger}
  DATABASE_URLS='' DATABASE_URL=$(url 1 "$db") MIGRATION_DATABASE_URL=$(migrate_url "$db") npx tsx app/.server/db/migrate-cli.ts
  DATABASE_URLS='' DATABASE_URL=$(url 1 "$db") npx tsx seed-data/load.ts --if-empty
}

usage() { echo "usage: scripts/cluster.sh start|stop|status|kill NODE|restart NODE|url NODE [database]|urls [database]|migrate-url [database [NODE]]|migrate" >&2; exit 2; }
node_arg() { [[ "${1:-}" =~ ^[123]$ ]] || { echo "NODE is 1, 2 or 3" >&2; exit 2; }; echo "$1"; }

case "${1:-}" in
  start) start ;;
  stop) stop ;;
  status) status ;;
  kill) kill_node "$(node_arg "${2:-}")" ;;
  restart) restart_node "$(node_arg "${2:-}")" ;;
  url) url "$(node_arg "${2:-}")" "${3:-}" ;;
  urls) urls "${2:-}" ;;
  migrate-url) migrate_url "${2:-}" "$(node_arg "${3:-1}")" ;;
  migrate) migrate "${2:-}" ;;
  *) usage ;;
esac
