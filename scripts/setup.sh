#!/usr/bin/env bash
# Installs what is missing: Debian packages (MariaDB; Chromium with --browser) and npm dependencies.
set -euo pipefail
cd "$(dirname "$0")/.."
want_browser=0
[ "${1:-}" = "--browser" ] && want_browser=1
say() { printf 'bandledger setup: %s\n' "$*" >&2; }
need=()
command -v mariadbd >/dev/null 2>&1 || [ -x /usr/sbin/mariadbd ] || need+=(mariadb-server mariadb-client)
command -v flock >/dev/null 2>&1 || need+=(util-linux)
if [ "$want_browser" = 1 ] && [ ! -x /usr/bin/chromium ]; then need+=(chromium); fi
if [ ${#need[@]} -gt 0 ]; then
  say "installing ${need[*]} from Debian's packages"
  export DEBIAN_FRONTEND=noninteractive
  apt-get update -qq >/dev/null
  apt-get install -y -qq --no-install-recommends "${need[@]}" >/dev/null
fi
stamp=node_modules/.bandledger-lock-hash
hash=$(sha256sum package-lock.json | cut -c1-64)
if [ ! -f "$stamp" ] || [ "$(cat "$stamp")" != "$hash" ]; then
  say "installing npm dependencies"
  npm ci --no-audit --no-fund --loglevel=error
  echo "$hash" >"$stamp"
fi
