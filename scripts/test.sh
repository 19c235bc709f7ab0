#!/usr/bin/env bash
# npm test: a private MariaDB instance and a fresh database for this run, migrations, the type check,
# a Next build when stale, then the whole vitest suite (or the files given as arguments: npm test -- tests/app).
# Ends with the line "N passed, N failed".
set -uo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/common.sh"
cd "$repo_root"

instance=test
export DATABASE_PORT="${TEST_DATABASE_PORT:-3317}"
export DATABASE_NAME="stillpoint_test_r$$"
export REDIS_PORT="${TEST_REDIS_PORT:-6390}"
export REDIS_URL="redis://127.0.0.1:$REDIS_PORT"
# Each run has its own keys in the shared test Redis.
export QUEUE_PREFIX="stillpoint-test-r$$"
# Mail goes to this run's local sink (db/smtp.sh test); tests read it back from MAIL_SINK_DIR.
export SMTP_HOST=127.0.0.1
export SMTP_PORT="${TEST_SMTP_PORT:-2535}"
export MAIL_SINK_DIR="$repo_root/.data/mail-test"
export PUBLIC_BASE_URL="http://stillpoint.test:3000"
unset MAILBOX_PAGE
# Workers started by the tests give up a dead worker's job after 2 s instead of 30.
export WORKER_LOCK_MS=2000
# The suite runs many files at once on two cores: a local connection can take over the default 3 s to be accepted.
# (Tests of a database outage start their servers with their own, shorter timeout.)
export DATABASE_CONNECT_TIMEOUT_MS="${DATABASE_CONNECT_TIMEOUT_MS:-10000}"
export NEXTAUTH_SECRET="$(random_secret)"
# Full-stack tests serve on a random port: take the origin from the request's Host header.
export AUTH_TRUST_HOST=true
unset NEXTAUTH_URL

results_dir=".data/test-results"
report="$results_dir/vitest-$$.json"
runs_dir=".data/mariadb-$instance.runs"
mkdir -p "$results_dir" "$runs_dir"

root_sql() { mariadb --no-defaults --socket=".data/mariadb-$instance/mariadb.sock" -uroot -e "$1"; }

cleanup() {
  trap - EXIT INT TERM
  root_sql "DROP DATABASE IF EXISTS \`$DATABASE_NAME\`" 2>/dev/null || true
  redis-cli -p "$REDIS_PORT" --scan --pattern "$QUEUE_PREFIX:*" 2>/dev/null | xargs -r redis-cli -p "$REDIS_PORT" del >/dev/null 2>&1 || true
  rm -f "$runs_dir/$$" "$report"
  # Stop the test instance unless another test run is still using it.
  local other
  for other in "$runs_dir"/*; do
    [[ -e "$other" ]] || continue
    if kill -0 "$(basename "$other")" 2>/dev/null; then return; fi
    rm -f "$other"
  done
  bash db/mariadb.sh stop "$instance" || true
  bash db/redis.sh stop "$instance" || true
  bash db/smtp.sh stop "$instance" || true
}
trap cleanup EXIT
trap 'exit 130' INT
trap 'exit 143' TERM

touch "$runs_dir/$$"
started=$(date +%s)
fail() { echo "[test] $*" >&2; exit 1; }

bash db/mariadb.sh start "$instance" || fail "could not start the test database"
bash db/redis.sh start "$instance" || fail "could not start the test Redis"
bash db/smtp.sh start "$instance" || fail "could not start the test mail sink"
root_sql "DROP DATABASE IF EXISTS \`$DATABASE_NAME\`; CREATE DATABASE \`$DATABASE_NAME\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci; GRANT ALL PRIVILEGES ON \`$DATABASE_NAME%\`.* TO 'app'@'127.0.0.1';" \
  || fail "could not create $DATABASE_NAME"
knex_cli migrate:latest || fail "migrations failed"
knex_cli seed:run || fail "seeding the test database failed"

# Browser tests (tests/browser): playwright-core drives Debian's chromium; install the package when it is missing.
if [[ ! -x /usr/bin/chromium ]]; then
  echo "[test] installing chromium for the browser tests" >&2
  { apt-get update -qq && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends chromium; } >&2 \
    || echo "[test] could not install chromium; the browser tests will fail" >&2
fi

echo "[test] tsc --noEmit" >&2
tsc_status=0
npx --no-install tsc --noEmit || tsc_status=$?
[[ $tsc_status == 0 ]] && echo "[test] type check passed" >&2 || echo "[test] type check FAILED" >&2

build_status=0
build_if_needed || build_status=$?
[[ $build_status == 0 ]] || echo "[test] next build FAILED; full-stack tests will fail" >&2

echo "[test] vitest" >&2
vitest_status=0
npx --no-install vitest run --reporter=default --reporter=json --outputFile.json="$report" "$@" || vitest_status=$?

if [[ ! -s "$report" ]]; then
  fail "vitest wrote no report (exit $vitest_status)"
fi
# A test file that failed before or around its tests (import error, failing hook) counts as one failure.
read -r passed failed < <(node -e '
  const r = JSON.parse(require("node:fs").readFileSync(process.argv[1], "utf8"));
  const brokenFiles = r.testResults.filter(
    (f) => f.status === "failed" && !f.assertionResults.some((a) => a.status === "failed"),
  ).length;
  console.log(r.numPassedTests, r.numFailedTests + brokenFiles);
' "$report")
echo "[test] finished in $(( $(date +%s) - started )) s (tsc exit $tsc_status, build exit $build_status, vitest exit $vitest_status)" >&2
echo "$passed passed, $failed failed"
if [[ $tsc_status != 0 || $build_status != 0 || $vitest_status != 0 || $failed != 0 ]]; then
  exit 1
fi
exit 0
