import type { ZernikeOrdering, ZernikeSet } from "./types.ts";

/**
 * Largest radial order supported. The radial polynomials are summed from their
 * exact integer coefficients; up to order 24 those stay below 2^53 and the
 * cancellation error at rho = 1 stays below 1e-8.
 */
export const MAX_RADIAL_ORDER = 24;
/** Largest Noll index with radial order <= MAX_RADIAL_ORDER: (n + 1)(n + 2) / 2. */
export const MAX_NOLL_INDEX = ((MAX_RADIAL_ORDER + 1) * (MAX_RADIAL_ORDER + 2)) / 2;
/** Largest ANSI index with radial order <= MAX_RADIAL_ORDER: the term (n, m = n), (n(n + 2) + n) / 2. */
export const MAX_ANSI_INDEX = (MAX_RADIAL_ORDER * (MAX_RADIAL_ORDER + 2) + MAX_RADIAL_ORDER) / 2;

/** Radial order n and signed azimuthal order m (m < 0: sin(|m| phi), m > 0: cos(m phi)). */
export interface ZernikeOrders {
  n: number;
  m: number;
}

function checkNoll(j: number): void {
  if (!Number.isInteger(j) || j < 1 || j > MAX_NOLL_INDEX) {
    throw new RangeError(`Noll index must be an integer from 1 to ${MAX_NOLL_INDEX}, got ${j}`);
  }
}

function checkAnsi(j: number): void {
  if (!Number.isInteger(j) || j < 0 || j > MAX_ANSI_INDEX) {
    throw new RangeError(`ANSI index must be an integer from 0 to ${MAX_ANSI_INDEX}, got ${j}`);
  }
}

/**
 * Orders (n, m) of the Noll term j. Within radial order n the terms run in
 * increasing |m|; even j carries cos(m phi), odd j carries sin(|m| phi).
 * Source: R. J. Noll, J. Opt. Soc. Am. 66, 207-211 (1976), Table I.
 * @throws RangeError when j is not an integer in [1, MAX_NOLL_INDEX].
 */
export function nollToOrders(j: number): ZernikeOrders {
  checkNoll(j);
  let n = 0;
  while (((n + 1) * (n + 2)) / 2 < j) n++;
  const position = j - (n * (n + 1)) / 2; // 1-based position within the row
  const mAbs = n % 2 === 0 ? 2 * Math.floor(position / 2) : 2 * Math.floor((position - 1) / 2) + 1;
  if (mAbs === 0) return { n, m: 0 };
  return { n, m: j % 2 === 0 ? mAbs : -mAbs };
}

/**
 * Noll index of the term with orders (n, m); inverse of {@link nollToOrders}.
 * @throws RangeError when (n, m) is not a Zernike term (|m| > n, n - |m| odd).
 */
export function ordersToNoll(n: number, m: number): number {
  const mAbs = Math.abs(m);
  if (!Number.isInteger(n) || !Number.isInteger(m) || n < 0 || n > MAX_RADIAL_ORDER || mAbs > n || (n - mAbs) % 2 !== 0) {
    throw new RangeError(`(n, m) = (${n}, ${m}) is not a Zernike term with n <= ${MAX_RADIAL_ORDER}`);
  }
  const rowStart = (n * (n + 1)) / 2;
  if (mAbs === 0) return rowStart + 1;
  // The two terms with this |m| sit at positions |m| and |m| + 1; cos takes the even index.
  const first = rowStart + mAbs;
  const wantEven = m > 0;
  return (first % 2 === 0) === wantEven ? first : first + 1;
}

/**
 * ANSI Z80.28 / ISO 24157 single index of a Noll term: `j_ansi = (n(n + 2) + m) / 2`.
 * @throws RangeError for an invalid Noll index.
 */
export function nollToAnsi(j: number): number {
  const { n, m } = nollToOrders(j);
  return (n * (n + 2) + m) / 2;
}

/**
 * Noll index of an ANSI Z80.28 / ISO 24157 single index:
 * `n = ceil((-3 + sqrt(9 + 8 j)) / 2)`, `m = 2 j - n(n + 2)`.
 * @throws RangeError for an invalid ANSI index.
 */
export function ansiToNoll(j: number): number {
  checkAnsi(j);
  const n = Math.ceil((-3 + Math.sqrt(9 + 8 * j)) / 2 - 1e-12);
  return ordersToNoll(n, 2 * j - n * (n + 2));
}

/** Noll index of an index given in `ordering`. @throws TypeError for an unknown ordering. */
export function toNollIndex(ordering: ZernikeOrdering, index: number): number {
  if (ordering === "noll") {
    checkNoll(index);
    return index;
  }
  if (ordering === "ansi") return ansiToNoll(index);
  throw new TypeError(`Zernike ordering must be "noll" or "ansi", got ${JSON.stringify(ordering)}`);
}

/**
 * Check a list of Noll indices (a model's variables, a Zernike set after conversion): not empty,
 * every index valid, no term twice. The one Noll-list check of the product.
 * @param what how the list is named in messages
 * @returns a copy of the list
 * @throws RangeError "<what> must list at least one term" / "Noll index must be an integer from 1 to 325, got x" /
 *   "<what> lists Noll term j more than once"
 */
export function requireNollIndices(nollIndices: ArrayLike<number>, what = "Noll index list"): number[] {
  if (nollIndices.length === 0) throw new RangeError(`${what} must list at least one term`);
  const seen = new Set<number>();
  const out: number[] = [];
  for (let i = 0; i < nollIndices.length; i++) {
    const j = nollIndices[i];
    nollToOrders(j);
    if (seen.has(j)) throw new RangeError(`${what} lists Noll term ${j} more than once`);
    seen.add(j);
    out.push(j);
  }
  return out;
}

/**
 * Noll indices of a Zernike set, in the set's order.
 * @throws TypeError for an unknown ordering or a non-array index list;
 *   RangeError for an empty list, an invalid index or a repeated term ({@link requireNollIndices}).
 */
export function toNollIndices(set: ZernikeSet): number[] {
  if (!Array.isArray(set?.indices)) throw new TypeError("Zernike set indices must be an array of integers");
  if (set.indices.length === 0) throw new RangeError("Zernike set must list at least one term");
  return requireNollIndices(set.indices.map((index) => toNollIndex(set.ordering, index)), "Zernike set");
}

/**
 * Coefficients of the radial polynomial R_n^|m| in powers of rho, highest first,
 * stepping by rho^2: `R = sum_s (-1)^s (n - s)! / (s! ((n + m)/2 - s)! ((n - m)/2 - s)!) rho^(n - 2s)`.
 * Source: Born and Wolf, Principles of Optics, section 9.2.1 and appendix VII.
 */
export function radialCoefficients(n: number, mAbs: number): Float64Array {
  const count = (n - mAbs) / 2 + 1;
  const out = new Float64Array(count);
  for (let s = 0; s < count; s++) {
    // Multiply the ratio of factorials step by step to stay exact in doubles.
    let value = 1;
    for (let t = (n + mAbs) / 2 - s + 1; t <= n - s; t++) value *= t; // (n - s)! / ((n + m)/2 - s)!
    for (let t = 2; t <= s; t++) value /= t;
    for (let t = 2; t <= (n - mAbs) / 2 - s; t++) value /= t;
    out[s] = s % 2 === 0 ? Math.round(value) : -Math.round(value);
  }
  return out;
}

/**
 * Unit-RMS Zernike polynomial of Noll index j at polar pupil coordinates:
 * `Z_j = sqrt(n + 1) R_n^0(rho)` for m = 0, `sqrt(2(n + 1)) R_n^|m|(rho) cos(m phi)` or `sin(|m| phi)` otherwise.
 * Source: R. J. Noll, J. Opt. Soc. Am. 66, 207-211 (1976), Table I.
 * @param rho normalised radius r / R (any value; the disc is rho <= 1)
 * @param phi azimuth in radians, from +x towards +y
 * @throws RangeError for an invalid Noll index.
 */
export function zernike(j: number, rho: number, phi: number): number {
  return new ZernikeTerm(j).at(rho, phi);
}

/** One Zernike term with its radial coefficients precomputed, for evaluation on many points. */
export class ZernikeTerm {
  readonly n: number;
  readonly m: number;
  private readonly coefficients: Float64Array;
  private readonly norm: number;

  constructor(readonly noll: number) {
    const { n, m } = nollToOrders(noll);
    this.n = n;
    this.m = m;
    this.coefficients = radialCoefficients(n, Math.abs(m));
    this.norm = m === 0 ? Math.sqrt(n + 1) : Math.sqrt(2 * (n + 1));
  }

  /** Value at (rho, phi); see {@link zernike}. */
  at(rho: number, phi: number): number {
    const rho2 = rho * rho;
    let radial = 0;
    for (let s = 0; s < this.coefficients.length; s++) radial = radial * rho2 + this.coefficients[s];
    radial *= rho ** Math.abs(this.m);
    if (this.m === 0) return this.norm * radial;
    return this.norm * radial * (this.m > 0 ? Math.cos(this.m * phi) : Math.sin(-this.m * phi));
  }
}
