import knexFactory, { type Knex } from "knex";
import { knexConfig } from "./knex-config";

// One pool per process. Kept on globalThis so a module reloaded by the framework reuses it.
const holder = globalThis as typeof globalThis & { __stillpointKnex?: Knex };

export function db(): Knex {
  holder.__stillpointKnex ??= knexFactory(knexConfig());
  return holder.__stillpointKnex;
}

/** Closes the pool (tests and scripts that must let the process exit). */
export async function closeDb(): Promise<void> {
  const instance = holder.__stillpointKnex;
  holder.__stillpointKnex = undefined;
  await instance?.destroy();
}

/**
 * Opens the pool's minimum of connections (DATABASE_POOL_MIN) before a server takes requests, so that the first
 * requests under load do not all wait on new connections at once (each bounded by DATABASE_CONNECT_TIMEOUT_MS, then
 * 503). A database that is down now is no reason not to start: the result says how many opened, and requests answer
 * 503 until it is back.
 */
export async function warmPool(): Promise<{ opened: number; wanted: number }> {
  const knex = db();
  const wanted = (knex.client.pool as { min?: number } | undefined)?.min ?? 0;
  // Acquired all at once and only then released, so that the pool opens one connection for each.
  const connections = await Promise.allSettled(Array.from({ length: wanted }, () => knex.client.acquireConnection()));
  let opened = 0;
  for (const connection of connections) {
    if (connection.status !== "fulfilled") continue;
    opened++;
    await knex.client.releaseConnection(connection.value);
  }
  return { opened, wanted };
}

/** Whether the database answers now (a trivial query, bounded by DATABASE_CONNECT_TIMEOUT_MS). */
export async function databaseReachable(): Promise<boolean> {
  try {
    await db().raw("select 1");
    return true;
  } catch {
    return false;
  }
}
