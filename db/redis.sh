#!/usr/bin/env bash
# Private Redis instances for Stillpoint's job queue, on 127.0.0.1 with their own port and data folder.
#
#   db/redis.sh start  [instance]   install redis-server if missing, start (idempotent)
#   db/redis.sh stop   [instance]   stop by the PID in the instance's pid file
#   db/redis.sh status [instance]   exit 0 and print the port when running, exit 3 otherwise
#
# instance defaults to "demo". REDIS_PORT: demo 6380, test 6390, any other instance: required.
# REDIS_DATA_ROOT: parent folder of instance folders (default: <repo>/.data).
set -euo pipefail

command_name="${1:-}"
instance="${2:-demo}"
repo_root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
data_root="${REDIS_DATA_ROOT:-$repo_root/.data}"
dir="$data_root/redis-$instance"

case "$instance" in
  demo) default_port=6380 ;;
  test) default_port=6390 ;;
  *) default_port="" ;;
esac
port="${REDIS_PORT:-$default_port}"
pid_file="$dir/redis.pid"

source "$repo_root/db/instance.sh"
log() { echo "[redis:$instance] $*" >&2; }
die() { log "error: $*"; exit 1; }

[[ "$instance" =~ ^[A-Za-z0-9_-]+$ ]] || die "instance name may hold only letters, digits, '-' and '_'"

ensure_installed() {
  command -v redis-server >/dev/null 2>&1 && command -v redis-cli >/dev/null 2>&1 && return
  log "Redis is not installed; installing redis-server from Debian's packages"
  [[ "$(id -u)" == "0" ]] || die "installing Redis needs root (apt-get); install redis-server, then retry"
  mkdir -p "$data_root"
  local apt_log="$data_root/redis-apt-install.log"
  { apt-get update -q && DEBIAN_FRONTEND=noninteractive apt-get install -y -q --no-install-recommends redis-server; } \
    >"$apt_log" 2>&1 || { tail -n 30 "$apt_log" >&2; die "apt-get install failed (full log: $apt_log)"; }
  log "installed $(redis-server --version | head -n 1)"
}

start() {
  [[ -n "$port" ]] || die "set REDIS_PORT for instance '$instance'"
  if pid="$(running_pid)"; then
    log "already running (pid $pid, port $(cat "$dir/port" 2>/dev/null || echo "?"))"
    return
  fi
  ensure_installed
  mkdir -p "$dir"
  rm -f "$pid_file"
  log "starting on 127.0.0.1:$port"
  # The append-only file keeps queued work across a restart; no RDB snapshots.
  redis-server --bind 127.0.0.1 --port "$port" --dir "$dir" --daemonize yes --pidfile "$pid_file" \
    --appendonly yes --save '' --logfile "$dir/redis.log" --protected-mode yes 9>&- \
    || die "redis-server did not start (see $dir/redis.log)"
  local waited=0
  until redis-cli -h 127.0.0.1 -p "$port" ping >/dev/null 2>&1; do
    sleep 0.1
    waited=$((waited + 1))
    if (( waited > 200 )); then
      tail -n 20 "$dir/redis.log" >&2 || true
      die "server did not answer within 20 s (see $dir/redis.log)"
    fi
  done
  echo "$port" >"$dir/port"
  log "running (pid $(cat "$pid_file"))"
}

stop() { stop_instance 300; }

status() { status_instance; }

mkdir -p "$data_root"
exec 9>"$data_root/redis-$instance.lock"
flock 9

case "$command_name" in
  start) start ;;
  stop) stop ;;
  status) status ;;
  *) echo "usage: db/redis.sh start|stop|status [instance]" >&2; exit 2 ;;
esac
