#!/usr/bin/env bash
# npm start: demo database, job queue (Redis) and local mail sink up, schema migrated, demo accounts and models seeded when missing,
# app built when stale, served on http://127.0.0.1:3000 with one training worker beside it.
# Ctrl-C stops the app, the worker and the services this script started.
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/common.sh"
cd "$repo_root"

export DATABASE_PORT="${DATABASE_PORT:-3307}"
export DATABASE_NAME="${DATABASE_NAME:-stillpoint}"
export REDIS_PORT="${REDIS_PORT:-6380}"
export REDIS_URL="${REDIS_URL:-redis://127.0.0.1:$REDIS_PORT}"
port="${PORT:-3000}"
export NEXTAUTH_URL="${NEXTAUTH_URL:-http://127.0.0.1:$port}"
# Mail goes to the local sink (db/smtp.sh), which keeps it under .data/mail-demo; admins read it on /mailbox.
export SMTP_HOST="${SMTP_HOST:-127.0.0.1}"
export SMTP_PORT="${SMTP_PORT:-2525}"
export MAIL_SINK_DIR="${MAIL_SINK_DIR:-$repo_root/.data/mail-demo}"
export MAILBOX_PAGE="${MAILBOX_PAGE:-1}"
export PUBLIC_BASE_URL="${PUBLIC_BASE_URL:-$NEXTAUTH_URL}"

ensure_auth_secret

db_was_running=0
bash db/mariadb.sh status demo >/dev/null 2>&1 && db_was_running=1
redis_was_running=0
bash db/redis.sh status demo >/dev/null 2>&1 && redis_was_running=1
smtp_was_running=0
bash db/smtp.sh status demo >/dev/null 2>&1 && smtp_was_running=1
bash db/mariadb.sh start demo
bash db/redis.sh start demo
bash db/smtp.sh start demo

server_pid=""
worker_pid=""
cleanup() {
  trap - EXIT INT TERM
  local pid
  for pid in "$server_pid" "$worker_pid"; do
    if [[ -n "$pid" ]] && kill -0 "$pid" 2>/dev/null; then kill -TERM "$pid" 2>/dev/null || true; fi
  done
  for pid in "$server_pid" "$worker_pid"; do
    [[ -n "$pid" ]] && wait "$pid" 2>/dev/null || true
  done
  if [[ "$smtp_was_running" == 0 ]]; then bash db/smtp.sh stop demo || true; fi
  if [[ "$redis_was_running" == 0 ]]; then bash db/redis.sh stop demo || true; fi
  if [[ "$db_was_running" == 0 ]]; then bash db/mariadb.sh stop demo || true; fi
}
trap cleanup EXIT
trap 'exit 130' INT
trap 'exit 143' TERM

knex_cli migrate:latest
knex_cli seed:run
build_if_needed

# The training worker runs in its own process, never in the request path; more can join with `npx stillpoint worker`.
node "$repo_root/bin/stillpoint.mjs" worker &
worker_pid=$!

echo "[start] serving on http://127.0.0.1:$port (demo accounts: see README.md)" >&2
node --import tsx "$repo_root/server/main.ts" -H 127.0.0.1 -p "$port" &
server_pid=$!
# Stop everything when either the server or the worker ends.
wait -n "$server_pid" "$worker_pid"
