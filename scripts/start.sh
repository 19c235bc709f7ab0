#!/usr/bin/env bash
# npm start: demo database up, schema migrated, demo accounts seeded when empty, app built when stale,
# served on http://127.0.0.1:3000. Ctrl-C stops the app and the database this script started.
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/common.sh"
cd "$repo_root"

export DATABASE_PORT="${DATABASE_PORT:-3307}"
export DATABASE_NAME="${DATABASE_NAME:-stillpoint}"
port="${PORT:-3000}"
export NEXTAUTH_URL="${NEXTAUTH_URL:-http://127.0.0.1:$port}"

ensure_auth_secret

db_was_running=0
bash db/mariadb.sh status demo >/dev/null 2>&1 && db_was_running=1
bash db/mariadb.sh start demo

server_pid=""
cleanup() {
  trap - EXIT INT TERM
  if [[ -n "$server_pid" ]] && kill -0 "$server_pid" 2>/dev/null; then
    kill -TERM "$server_pid" 2>/dev/null || true
    wait "$server_pid" 2>/dev/null || true
  fi
  if [[ "$db_was_running" == 0 ]]; then bash db/mariadb.sh stop demo || true; fi
}
trap cleanup EXIT
trap 'exit 130' INT
trap 'exit 143' TERM

knex_cli migrate:latest
knex_cli seed:run
build_if_needed

echo "[start] serving on http://127.0.0.1:$port (demo accounts: see README.md)" >&2
"$repo_root/node_modules/.bin/next" start -H 127.0.0.1 -p "$port" &
server_pid=$!
wait "$server_pid"
