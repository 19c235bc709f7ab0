#!/usr/bin/env bash
# The local mail sink (an SMTP server on 127.0.0.1 that keeps what it receives), per instance.
#
#   db/smtp.sh start  [instance]   start `stillpoint mail-sink` in the background (idempotent)
#   db/smtp.sh stop   [instance]   stop it by the PID in the instance's pid file
#   db/smtp.sh status [instance]   exit 0 and print the port when running, exit 3 otherwise
#
# instance defaults to "demo". SMTP_PORT: demo 2525, test 2535, any other instance: required.
# SMTP_DATA_ROOT: parent folder of instance folders (default: <repo>/.data). Messages go to MAIL_SINK_DIR (default
# <data root>/mail-<instance>), one .eml and one .json each.
set -euo pipefail

service=smtp
source "$(dirname "${BASH_SOURCE[0]}")/instance.sh"
instance_init 2525 2535 SMTP_PORT SMTP_DATA_ROOT "$@"
mail_dir="${MAIL_SINK_DIR:-$data_root/mail-$instance}"
pid_file="$dir/smtp.pid"

start() {
  require_port
  already_running && return
  mkdir -p "$dir" "$mail_dir"
  rm -f "$pid_file"
  log "starting on 127.0.0.1:$port (messages in $mail_dir)"
  # Detached from this shell: it outlives the script that started it until `stop`.
  nohup node "$repo_root/bin/stillpoint.mjs" mail-sink --port "$port" --dir "$mail_dir" >"$dir/smtp.log" 2>&1 9>&- &
  echo $! >"$pid_file"
  if ! WAIT_PID="$(cat "$pid_file")" wait_until 200 "$dir/smtp.log" grep -q "listening on" "$dir/smtp.log"; then
    rm -f "$pid_file"
    die "the mail sink did not start (see $dir/smtp.log)"
  fi
  started
}

instance_main 100 "messages=$mail_dir"
