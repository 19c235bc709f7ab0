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
