#!/usr/bin/env bash
# The local mail sink (an SMTP server on 127.0.0.1 that keeps what it receives), per instance.
#
#   db/smtp.sh start  [instance]   start `stillpoint mail-sink` in the background (idempotent)
#   db/smtp.sh stop   [instance]   stop it by the PID in the instance's pid file
#   db/smtp.sh status [instance]   exit 0 and print the port when running, exit 3 otherwise
#
# instance defaults to "demo". SMTP_PORT: demo 2525, test 2535, any other instance: required.
# Messages go to MAIL_SINK_DIR (default <repo>/.data/mail-<instance>), one .eml and one .json each.
set -euo pipefail

command_name="${1:-}"
instance="${2:-demo}"
repo_root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
data_root="$repo_root/.data"
dir="$data_root/smtp-$instance"

case "$instance" in
  demo) default_port=2525 ;;
  test) default_port=2535 ;;
  *) default_port="" ;;
esac
port="${SMTP_PORT:-$default_port}"
mail_dir="${MAIL_SINK_DIR:-$data_root/mail-$instance}"
pid_file="$dir/smtp.pid"

source "$repo_root/db/instance.sh"
log() { echo "[smtp:$instance] $*" >&2; }
die() { log "error: $*"; exit 1; }

[[ "$instance" =~ ^[A-Za-z0-9_-]+$ ]] || die "instance name may hold only letters, digits, '-' and '_'"

start() {
  [[ -n "$port" ]] || die "set SMTP_PORT for instance '$instance'"
  if pid="$(running_pid)"; then
    log "already running (pid $pid, port $(cat "$dir/port" 2>/dev/null || echo "?"))"
    return
  fi
  mkdir -p "$dir" "$mail_dir"
  rm -f "$pid_file"
  log "starting on 127.0.0.1:$port (messages in $mail_dir)"
  # Detached from this shell: it outlives the script that started it until `stop`.
  nohup node "$repo_root/bin/stillpoint.mjs" mail-sink --port "$port" --dir "$mail_dir" >"$dir/smtp.log" 2>&1 9>&- &
  echo $! >"$pid_file"
  local waited=0
  until grep -q "listening on" "$dir/smtp.log" 2>/dev/null; do
    sleep 0.1
    waited=$((waited + 1))
    if ! kill -0 "$(cat "$pid_file")" 2>/dev/null || (( waited > 200 )); then
      tail -n 20 "$dir/smtp.log" >&2 || true
      rm -f "$pid_file"
      die "the mail sink did not start (see $dir/smtp.log)"
    fi
  done
  echo "$port" >"$dir/port"
  log "running (pid $(cat "$pid_file"))"
}

stop() { stop_instance 100; }

status() { status_instance "messages=$mail_dir"; }

mkdir -p "$data_root"
exec 9>"$data_root/smtp-$instance.lock"
flock 9

case "$command_name" in
  start) start ;;
  stop) stop ;;
  status) status ;;
  *) echo "usage: db/smtp.sh start|stop|status [instance]" >&2; exit 2 ;;
esac
