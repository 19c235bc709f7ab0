# Shared by scripts/start.sh and scripts/test.sh (sourced, not run).
repo_root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
export NEXT_TELEMETRY_DISABLED=1

knex_cli() {
  node --import tsx "$repo_root/node_modules/knex/bin/cli.js" --knexfile "$repo_root/knexfile.ts" "$@"
}

random_secret() {
  node -e 'process.stdout.write(require("node:crypto").randomBytes(32).toString("base64url"))'
}

# Builds the Next app when there is no build yet or any of its sources is newer than the last one.
build_if_needed() {
  local build_id="$repo_root/.next/BUILD_ID"
  local reason=""
  if [[ ! -f "$build_id" ]]; then
    reason="no build yet"
  else
    local newer
    newer="$(cd "$repo_root" && find app components lib fonts public proxy.ts instrumentation.ts next.config.ts tailwind.config.ts \
      postcss.config.mjs tsconfig.json package-lock.json -newer "$build_id" -type f -print -quit 2>/dev/null || true)"
    [[ -n "$newer" ]] && reason="$newer changed since the last build"
  fi
  if [[ -z "$reason" ]]; then
    echo "[build] up to date" >&2
    return 0
  fi
  echo "[build] next build ($reason)" >&2
  mkdir -p "$repo_root/.data"
  (
    flock 8
    cd "$repo_root" && npx --no-install next build
  ) 8>"$repo_root/.data/next-build.lock"
}

# The demo checkout keeps one session secret in .data/auth-secret, so sessions survive a restart.
ensure_auth_secret() {
  if [[ -z "${NEXTAUTH_SECRET:-}" ]]; then
    mkdir -p "$repo_root/.data"
    [[ -s "$repo_root/.data/auth-secret" ]] || (umask 077 && random_secret >"$repo_root/.data/auth-secret")
    NEXTAUTH_SECRET="$(cat "$repo_root/.data/auth-secret")"
    export NEXTAUTH_SECRET
  fi
}
