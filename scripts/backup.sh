#!/usr/bin/env bash
# npm run db:backup [-- FILE] / npm run db:restore -- FILE: a logical dump with mariadb-dump, and its restore.
# Runs as the schema's owner: MIGRATION_DATABASE_URL (else DATABASE_URL) when set, else the embedded migration account.
# Row rights of the runtime account are kept by name, so they hold again once a restore has re-created the tables.
set -euo pipefail
cd "$(dirname "$0")/.."
export PATH=$PATH:/usr/sbin
mode=${1:?usage: scripts/backup.sh backup|restore [file]}
url=${MIGRATION_DATABASE_URL:-${DATABASE_URL:-$(bash scripts/db.sh url "${BANDLEDGER_DB_NAME:-bandledger}" migrate)}}
eval "$(node -e '
  const u = new URL(process.argv[1]);
  const q = (s) => "\x27" + decodeURIComponent(s).replace(/\x27/g, "\x27\\\x27\x27") + "\x27";
  console.log(`DB_HOST=${q(u.hostname)} DB_PORT=${q(u.port || "3306")} DB_USER=${q(u.username)} DB_PASS=${q(u.password)} DB_NAME=${q(u.pathname.slice(1))}`);
' "$url")"
export MYSQL_PWD=$DB_PASS
conn=(--no-defaults --protocol=tcp -h "$DB_HOST" -P "$DB_PORT" -u "$DB_USER")
case "$mode" in
  backup)
    file=${2:-.data/backups/$DB_NAME-$(date -u +%Y%m%dT%H%M%SZ).sql}
    mkdir -p "$(dirname "$file")"
    mariadb-dump "${conn[@]}" --single-transaction --routines --triggers --hex-blob --skip-dump-date --default-character-set=utf8mb4 "$DB_NAME" >"$file.partial"
    mv "$file.partial" "$file"
    echo "bandledger: backup of $DB_NAME written to $file" >&2
    ;;
  restore)
    file=${2:?usage: scripts/backup.sh restore FILE}
    [ -f "$file" ] || { echo "bandledger: no such backup file: $file" >&2; exit 2; }
    mariadb "${conn[@]}" -e "DROP DATABASE IF EXISTS \`$DB_NAME\`; CREATE DATABASE \`$DB_NAME\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci"
    mariadb "${conn[@]}" --default-character-set=utf8mb4 "$DB_NAME" <"$file"
    echo "bandledger: $DB_NAME restored from $file" >&2
    ;;
  *) echo "usage: scripts/backup.sh backup|restore [file]" >&2; exit 2 ;;
esac
