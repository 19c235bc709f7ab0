#!/usr/bin/env bash
# Private MariaDB instances for Stillpoint, on 127.0.0.1 with their own port, socket and data folder.
#
#   db/mariadb.sh start  [instance]   install the server if missing, initialise, start (idempotent)
#   db/mariadb.sh stop   [instance]   stop by the PID in the instance's pid file
#   db/mariadb.sh status [instance]   exit 0 and print the port when running, exit 3 otherwise
#
# instance defaults to "demo". Settings come from the environment:
#   DATABASE_PORT      demo: 3307, test: 3317, any other instance: required
#   DATABASE_NAME      database created on start (default: stillpoint)
#   DATABASE_USER      (default: app) created as 'user'@'127.0.0.1'
#   DATABASE_PASSWORD  (default: stillpoint-local)
#   MARIADB_DATA_ROOT  parent folder of instance folders (default: <repo>/.data)
set -euo pipefail

service=mariadb
source "$(dirname "${BASH_SOURCE[0]}")/instance.sh"
instance_init 3307 3317 DATABASE_PORT MARIADB_DATA_ROOT "$@"
db_name="${DATABASE_NAME:-stillpoint}"
db_user="${DATABASE_USER:-app}"
db_password="${DATABASE_PASSWORD:-stillpoint-local}"
socket="$dir/mariadb.sock"
pid_file="$dir/mariadbd.pid"

[[ "$db_name" =~ ^[A-Za-z0-9_]+$ ]] || die "DATABASE_NAME may hold only letters, digits and '_'"
[[ "$db_user" =~ ^[A-Za-z0-9_]+$ ]] || die "DATABASE_USER may hold only letters, digits and '_'"
[[ "$db_password" != *"'"* && "$db_password" != *"\\"* ]] || die "DATABASE_PASSWORD may not contain quotes or backslashes"

client() { mariadb --no-defaults --socket="$socket" -uroot "$@"; }

ensure_installed() {
  if command -v mariadbd >/dev/null 2>&1 && command -v mariadb >/dev/null 2>&1 && command -v mariadb-install-db >/dev/null 2>&1; then
    return
  fi
  log "MariaDB is not installed; installing mariadb-server and mariadb-client from Debian's packages"
  [[ "$(id -u)" == "0" ]] || die "installing MariaDB needs root (apt-get); install mariadb-server and mariadb-client, then retry"
  mkdir -p "$data_root"
  local apt_log="$data_root/mariadb-apt-install.log"
  { apt-get update -q && DEBIAN_FRONTEND=noninteractive apt-get install -y -q --no-install-recommends mariadb-server mariadb-client; } \
    >"$apt_log" 2>&1 || { tail -n 30 "$apt_log" >&2; die "apt-get install failed (full log: $apt_log)"; }
  log "installed $(mariadbd --version 2>/dev/null | head -n 1)"
}

start() {
  require_port
  if already_running; then
    ensure_database
    return
  fi
  ensure_installed
  mkdir -p "$dir"
  if [[ ! -d "$dir/data/mysql" ]]; then
    log "initialising $dir/data"
    mariadb-install-db --no-defaults --user=root --datadir="$dir/data" \
      --auth-root-authentication-method=socket --skip-test-db >"$dir/install.log" 2>&1 \
      || { cat "$dir/install.log" >&2; die "mariadb-install-db failed"; }
  fi
  rm -f "$socket" "$pid_file"
  log "starting on 127.0.0.1:$port"
  # setsid: the server leaves the caller's process group, so stopping the caller never takes it down by accident;
  # 9>&-: it must not inherit the instance lock, or the next start or stop would wait for it forever.
  setsid mariadbd --no-defaults --user=root --datadir="$dir/data" --bind-address=127.0.0.1 --port="$port" \
    --socket="$socket" --pid-file="$pid_file" --log-error="$dir/error.log" \
    --max-allowed-packet=256M --skip-name-resolve </dev/null >/dev/null 2>&1 9>&- &
  wait_until 300 "$dir/error.log" mariadb-admin --no-defaults --socket="$socket" -uroot ping \
    || die "server did not answer within 30 s (see $dir/error.log)"
  ensure_database
  started
}

ensure_database() {
  # The app user may create and drop databases whose names start with the configured name
  # (tests make throw-away databases next to it); nothing else on the instance.
  client <<SQL
CREATE DATABASE IF NOT EXISTS \`$db_name\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;
CREATE USER IF NOT EXISTS '$db_user'@'127.0.0.1' IDENTIFIED BY '$db_password';
ALTER USER '$db_user'@'127.0.0.1' IDENTIFIED BY '$db_password';
GRANT ALL PRIVILEGES ON \`$db_name%\`.* TO '$db_user'@'127.0.0.1';
SQL
}

instance_main 600 "socket=$socket"
