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

service=redis
source "$(dirname "${BASH_SOURCE[0]}")/instance.sh"
instance_init 6380 6390 REDIS_PORT REDIS_DATA_ROOT "$@"
pid_file="$dir/redis.pid"

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

answers_pong() { [[ "$(redis-cli -h 127.0.0.1 -p "$port" ping 2>/dev/null)" == "PONG" ]]; }

start() {
  require_port
  already_running && return
  ensure_installed
  mkdir -p "$dir"
  rm -f "$pid_file"
  log "starting on 127.0.0.1:$port"
  # The append-only file keeps queued work across a restart; no RDB snapshots.
  redis-server --bind 127.0.0.1 --port "$port" --dir "$dir" --daemonize yes --pidfile "$pid_file" \
    --appendonly yes --save '' --logfile "$dir/redis.log" --protected-mode yes 9>&- \
    || die "redis-server did not start (see $dir/redis.log)"
  # PONG, not just an answer: while it loads the append-only file Redis answers every command with a LOADING error
  # (and redis-cli still exits 0), so a FLUSHALL or a queue's first command right after the start would fail.
  wait_until 300 "$dir/redis.log" answers_pong || die "server did not answer PONG within 30 s (see $dir/redis.log)"
  started
}

instance_main 300
