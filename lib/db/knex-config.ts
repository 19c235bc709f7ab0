import type { Knex } from "knex";
import { getConfig, type AppConfig } from "../config";

/** Connection settings for the configured database, or for another database on the same server. */
export function knexConfig(
  overrides: { databaseName?: string; config?: AppConfig } = {},
): Knex.Config {
  const { database } = overrides.config ?? getConfig();
  return {
    client: "mysql2",
    connection: {
      host: database.host,
      port: database.port,
      user: database.user,
      password: database.password,
      database: overrides.databaseName ?? database.name,
      charset: "utf8mb4",
      timezone: "Z",
      supportBigNumbers: true,
      // A database that does not answer: fail the connection attempt instead of waiting for the OS (minutes).
      connectTimeout: database.connectTimeoutMs,
    },
    pool: { min: database.poolMin, max: database.poolMax },
    // No free connection (or none can be made, the database being down) within this time: KnexTimeoutError, which
    // the API answers as 503 with Retry-After. Knex's default is 60 s.
    acquireConnectionTimeout: database.connectTimeoutMs,
  };
}
