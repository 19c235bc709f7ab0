#!/usr/bin/env bash
# The knex command line on the demo database (or the one DATABASE_* points at), e.g.
#   npm run knex -- migrate:make add_model_versions     npm run knex -- migrate:rollback
set -euo pipefail
source "$(dirname "${BASH_SOURCE[0]}")/common.sh"
cd "$repo_root"
ensure_auth_secret
knex_cli "$@"
