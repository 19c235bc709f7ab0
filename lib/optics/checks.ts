/**
 * Input checks shared by the whole numerical core, so that each rule and its message live in one
 * place (the zod schemas in lib/validation are built on the same messages).
 */

/** Messages of the checks below. */
export const CHECK_MESSAGES = {
  notNumber: (name: string) => `${name} must be a number`,
  notPositiveFinite: (name: string) => `${name} must be a positive finite number`,
} as const;

/**
 * Return `value` when it is a finite number > 0.
 * @throws TypeError "<name> must be a number"; RangeError "<name> must be a positive finite number"
 */
export function requirePositiveFinite(value: unknown, name: string): number {
  if (typeof value !== "number") throw new TypeError(CHECK_MESSAGES.notNumber(name));
  if (!Number.isFinite(value) || value <= 0) throw new RangeError(CHECK_MESSAGES.notPositiveFinite(name));
  return value;
}
