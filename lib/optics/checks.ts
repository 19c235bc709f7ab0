/**
 * Input checks shared by the whole numerical core, so that each rule and its message live in one
 * place (the zod schemas in lib/validation are built on the same checks and messages).
 */
import type { ZernikeOrdering } from "./types.ts";

/** How an index ordering is named in messages. */
const ORDERING_LABEL: Record<ZernikeOrdering, string> = { noll: "Noll", ansi: "ANSI" };

/** Messages of the checks below. */
export const CHECK_MESSAGES = {
  notNumber: (name: string) => `${name} must be a number`,
  notPositiveFinite: (name: string) => `${name} must be a positive finite number`,
  /** "coefficient of Noll term 5 must be a finite number (wavefront 2)"; `wavefront` only for batches. */
  coefficientNotFinite: (ordering: ZernikeOrdering, index: number | string, wavefront?: number) =>
    `coefficient of ${ORDERING_LABEL[ordering]} term ${index} must be a finite number` +
    (wavefront === undefined ? "" : ` (wavefront ${wavefront})`),
  coefficientCount: (terms: number, given: number) => `expected ${terms} coefficients (one per term), got ${given}`,
  batchLength: (given: number, terms: number) => `coefficient array length ${given} is not a multiple of ${terms} terms`,
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

/**
 * Check Zernike coefficients (nm RMS) over the terms `nollIndices`: one vector of J values, or with
 * `batch` a row-major `S x J` matrix, every entry finite. The one finite-coefficient check of the
 * product (propagator, parallel propagation, surrogate evaluation).
 * @returns the number of wavefronts S (1 for a single vector)
 * @throws RangeError "expected J coefficients (one per term), got n" /
 *   "coefficient array length n is not a multiple of J terms" /
 *   "coefficient of Noll term j must be a finite number" (plus " (wavefront s)" for a batch)
 */
export function requireFiniteCoefficients(
  coefficientsNm: ArrayLike<number>, nollIndices: ArrayLike<number>, batch = false,
): number {
  const terms = nollIndices.length;
  const given = coefficientsNm.length;
  if (batch) {
    if (terms === 0 || given % terms !== 0) throw new RangeError(CHECK_MESSAGES.batchLength(given, terms));
  } else if (given !== terms) {
    throw new RangeError(CHECK_MESSAGES.coefficientCount(terms, given));
  }
  for (let i = 0; i < given; i++) {
    if (!Number.isFinite(coefficientsNm[i])) {
      const t = i % terms;
      throw new RangeError(CHECK_MESSAGES.coefficientNotFinite("noll", nollIndices[t], batch ? (i - t) / terms : undefined));
    }
  }
  return terms === 0 ? 0 : given / terms;
}
