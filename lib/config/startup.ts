import { getConfig, requireAuthSecret } from "./index.ts";

/**
 * For the server's start (instrumentation.ts): the configuration validated before anything else; a bad variable stops
 * the process with exit status 78 (EX_CONFIG) and the message naming every bad variable. Next itself would log a
 * failed hook and keep serving errors.
 */
export function validateConfigOrExit(): void {
  try {
    requireAuthSecret(getConfig());
  } catch (error) {
    console.error(error instanceof Error ? error.message : String(error));
    process.exit(78);
  }
}
