import path from "node:path";
import type { Knex } from "knex";

/** Where the schema's migrations and the demo seeds live; shared by knexfile.ts and the tests. */
export function migrationConfig(repoRoot: string = process.cwd()): Pick<Knex.Config, "migrations" | "seeds"> {
  return {
    migrations: {
      directory: path.join(repoRoot, "migrations"),
      loadExtensions: [".ts"],
      tableName: "knex_migrations",
    },
    seeds: {
      directory: path.join(repoRoot, "seeds"),
      loadExtensions: [".ts"],
    },
  };
}
