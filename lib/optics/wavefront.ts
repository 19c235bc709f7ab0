import { CHECK_MESSAGES } from "./checks.ts";
import type { Wavefront, ZernikeOrdering } from "./types.ts";
import { toNollIndex } from "./zernike.ts";

function checkOrdering(ordering: unknown): asserts ordering is ZernikeOrdering {
  if (ordering !== "noll" && ordering !== "ansi") {
    throw new TypeError(`Zernike ordering must be "noll" or "ansi", got ${JSON.stringify(ordering)}`);
  }
}

/**
 * The wavefront's coefficients keyed by Noll index (nm RMS), after checking every entry.
 * @throws TypeError for a malformed object or unknown ordering; RangeError for a key that is
 *   not a valid index, a term given twice (e.g. as two spellings) or a coefficient that is not finite.
 */
export function nollCoefficients(wavefront: Wavefront): Map<number, number> {
  if (typeof wavefront !== "object" || wavefront === null) throw new TypeError("wavefront must be an object");
  checkOrdering(wavefront.ordering);
  const given = wavefront.coefficientsNm;
  if (typeof given !== "object" || given === null || Array.isArray(given)) {
    throw new TypeError("wavefront coefficientsNm must be an object mapping indices to nm RMS");
  }
  const out = new Map<number, number>();
  for (const [key, value] of Object.entries(given)) {
    const index = /^\d+$/.test(key) ? Number(key) : Number.NaN;
    const noll = toNollIndex(wavefront.ordering, index);
    if (typeof value !== "number" || !Number.isFinite(value)) {
      throw new RangeError(CHECK_MESSAGES.coefficientNotFinite(wavefront.ordering, key));
    }
    if (out.has(noll)) throw new RangeError(`${wavefront.ordering} term ${key} is given more than once`);
    out.set(noll, value);
  }
  return out;
}

const positions = new WeakMap<readonly number[], Map<number, number>>();
/** Position of each Noll index in a term list, made once per list (a batch converts thousands of wavefronts). */
function positionsOf(nollIndices: readonly number[]): Map<number, number> {
  let position = positions.get(nollIndices);
  if (!position) {
    position = new Map(nollIndices.map((j, i) => [j, i]));
    positions.set(nollIndices, position);
  }
  return position;
}

/**
 * Coefficient vector (nm RMS) of a wavefront over the given Noll terms; terms the
 * wavefront does not mention are zero.
 * @throws RangeError when the wavefront has a term outside `nollIndices`, and as {@link nollCoefficients}.
 */
export function wavefrontToVector(wavefront: Wavefront, nollIndices: readonly number[]): Float64Array {
  const coefficients = nollCoefficients(wavefront);
  const position = positionsOf(nollIndices);
  const out = new Float64Array(nollIndices.length);
  for (const [noll, value] of coefficients) {
    const i = position.get(noll);
    if (i === undefined) throw new RangeError(`Noll term ${noll} is not in this model's Zernike set`);
    out[i] = value;
  }
  return out;
}

/** Sorted Noll indices of every term that appears in any of the wavefronts. */
export function unionNollIndices(wavefronts: readonly Wavefront[]): number[] {
  const all = new Set<number>();
  for (const wavefront of wavefronts) for (const noll of nollCoefficients(wavefront).keys()) all.add(noll);
  return [...all].sort((a, b) => a - b);
}
