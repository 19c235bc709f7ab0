# Shared by db/mariadb.sh and db/redis.sh (sourced, not run): a private server instance known by its pid file.
# The caller defines $pid_file, $dir and log().

running_pid() {
  [[ -f "$pid_file" ]] || return 1
  local pid
  pid="$(cat "$pid_file" 2>/dev/null || true)"
  [[ -n "$pid" ]] && kill -0 "$pid" 2>/dev/null || return 1
  echo "$pid"
}

# Stop by the PID in the pid file: TERM, then wait up to $1 tenths of a second.
stop_instance() {
  local limit="${1:-600}" pid
  if ! pid="$(running_pid)"; then
    log "not running"
    return
  fi
  log "stopping (pid $pid)"
  kill -TERM "$pid"
  local waited=0
  while kill -0 "$pid" 2>/dev/null; do
    sleep 0.1
    waited=$((waited + 1))
    (( waited < limit )) || { log "error: pid $pid did not stop within $((limit / 10)) s"; exit 1; }
  done
  rm -f "$pid_file"
  log "stopped"
}

# Print the state; exit 3 when stopped. Extra words for the running line come as arguments.
status_instance() {
  local pid
  if pid="$(running_pid)"; then
    echo "running pid=$pid port=$(cat "$dir/port" 2>/dev/null || echo "?") $*"
  else
    echo "stopped"
    exit 3
  fi
}
