# The part db/mariadb.sh, db/redis.sh and db/smtp.sh share (sourced, not run): a private server instance on
# 127.0.0.1 with its own port, folder (<data root>/<service>-<instance>) and pid file, one start or stop at a time.
#
# A script sets $service, then calls
#   instance_init DEMO_PORT TEST_PORT PORT_VARIABLE DATA_ROOT_VARIABLE "$@"
# which reads the command and instance from the arguments and sets $command_name, $instance, $repo_root, $data_root,
# $dir and $port (from the named variable, else the instance's default; empty for other instances until `start`
# asks for it), and defines log and die. The script defines start, its $pid_file, and ends with
#   instance_main STOP_LIMIT_TENTHS [extra words for the status line...]

instance_init() {
  local demo_port="$1" test_port="$2" port_variable="$3" data_root_variable="$4"
  shift 4
  command_name="${1:-}"
  instance="${2:-demo}"
  repo_root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
  data_root="${!data_root_variable:-$repo_root/.data}"
  dir="$data_root/$service-$instance"
  local default_port=""
  case "$instance" in
    demo) default_port="$demo_port" ;;
    test) default_port="$test_port" ;;
  esac
  port="${!port_variable:-$default_port}"
  port_setting="$port_variable"
  [[ "$instance" =~ ^[A-Za-z0-9_-]+$ ]] || die "instance name may hold only letters, digits, '-' and '_'"
}

log() { echo "[$service:$instance] $*" >&2; }
die() { log "error: $*"; exit 1; }

# For start: a port is required for any instance other than demo and test.
require_port() {
  [[ -n "$port" ]] || die "set $port_setting for instance '$instance'"
}

running_pid() {
  [[ -f "$pid_file" ]] || return 1
  local pid
  pid="$(cat "$pid_file" 2>/dev/null || true)"
  [[ -n "$pid" ]] && kill -0 "$pid" 2>/dev/null || return 1
  echo "$pid"
}

# start's first step: true (and a log line) when the instance runs already.
already_running() {
  local pid
  pid="$(running_pid)" || return 1
  log "already running (pid $pid, port $(cat "$dir/port" 2>/dev/null || echo "?"))"
}

# Wait up to $1 tenths of a second for the command after $2 to succeed; on giving up show the tail of the log file
# $2 and return 1. With WAIT_PID set, also give up as soon as that process has ended.
wait_until() {
  local limit="$1" log_file="$2" waited=0
  shift 2
  until "$@" >/dev/null 2>&1; do
    sleep 0.1
    waited=$((waited + 1))
    if (( waited > limit )) || { [[ -n "${WAIT_PID:-}" ]] && ! kill -0 "$WAIT_PID" 2>/dev/null; }; then
      tail -n 20 "$log_file" >&2 || true
      return 1
    fi
  done
}

# start's last step: the port on record, and a log line.
started() {
  echo "$port" >"$dir/port"
  log "running (pid $(cat "$pid_file"))"
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
    (( waited < limit )) || die "pid $pid did not stop within $((limit / 10)) s"
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

# Runs the command under the instance's lock (npm start and npm test may start and stop side by side): start, stop
# (waiting up to $1 tenths of a second) or status (the other arguments: extra words for its line).
instance_main() {
  local stop_limit="$1"
  shift
  mkdir -p "$data_root"
  exec 9>"$data_root/$service-$instance.lock"
  flock 9
  case "$command_name" in
    start) start ;;
    stop) stop_instance "$stop_limit" ;;
    status) status_instance "$@" ;;
    *) echo "usage: db/$service.sh start|stop|status [instance]" >&2; exit 2 ;;
  esac
}
