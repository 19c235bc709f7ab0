import { fileURLToPath } from "node:url";
import knexFactory, { type Knex } from "knex";
import { getConfig } from "@/lib/config";
import { knexConfig } from "@/lib/db/knex-config";
import { migrationConfig } from "@/lib/db/migration-config";

export const REPO_ROOT = fileURLToPath(new URL("../..", import.meta.url));

/**
 * Guards every database test: scripts/test.sh points DATABASE_NAME at a throw-away database
 * on the private test instance; anything else (the demo data) is refused.
 */
export function testDatabaseName(): string {
  const name = getConfig().database.name;
  if (!name.startsWith("stillpoint_test")) {
    throw new Error(`database tests need a stillpoint_test* database (got "${name}"); run them with npm test`);
  }
  return name;
}

/** A Knex connection to a database on the test server, with the repository's migrations and seeds. */
export function connectTo(databaseName: string): Knex {
  return knexFactory({ ...knexConfig({ databaseName }), ...migrationConfig(REPO_ROOT) });
}
