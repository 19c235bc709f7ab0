import type { Knex } from "knex";
import { knexConfig } from "./lib/db/knex-config";
import { migrationConfig } from "./lib/db/migration-config";

// Read by the knex command line (see DEVELOPERS.md, "Migrate"); the app uses lib/db/knex.ts.
const config: Knex.Config = { ...knexConfig(), ...migrationConfig() };
export default config;
