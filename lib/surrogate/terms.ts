import { requireNollIndices } from "../optics/zernike.ts";

/**
 * One term of the surrogate polynomial, named by the Noll indices of the Zernike coefficients it multiplies:
 * `[]` is the constant `c0`, `[i]` the linear term `A_i a_i`, `[i, j]` (i <= j) the product term `B_ij a_i a_j`.
 */
export type Term = readonly number[];

/** Polynomial order of a surrogate: 1 keeps `c0` and `A`, 2 adds `B`. */
export type SurrogateOrder = 1 | 2;

/**
 * Terms of a full first-order model: `[]` then `[i]` for each index, in the given order (1 + J terms).
 * @throws {RangeError} from {@link checkNollIndices}
 * Source: PHYSICS.md section 5.
 */
export function firstOrderTerms(nollIndices: readonly number[]): Term[] {
  checkNollIndices(nollIndices);
  return [[], ...nollIndices.map((i) => [i])];
}

/**
 * Terms of a full second-order model: the first-order terms, then `[i, j]` for every pair with `i` at or
 * before `j` in the given order (1 + J + J(J+1)/2 terms; 595 for J = 33).
 * @throws {RangeError} from {@link checkNollIndices}
 * Source: PHYSICS.md section 5.
 */
export function secondOrderTerms(nollIndices: readonly number[]): Term[] {
  const terms = firstOrderTerms(nollIndices);
  for (let a = 0; a < nollIndices.length; a++) {
    for (let b = a; b < nollIndices.length; b++) terms.push([nollIndices[a], nollIndices[b]]);
  }
  return terms;
}

/** Terms of the full model of the given order. */
export function fullTerms(nollIndices: readonly number[], order: SurrogateOrder): Term[] {
  if (order !== 1 && order !== 2) throw new RangeError("order must be 1 or 2");
  return order === 1 ? firstOrderTerms(nollIndices) : secondOrderTerms(nollIndices);
}

/** Number of terms of a full model: `1 + J` (first order) or `1 + J + J(J+1)/2` (second order). */
export function fullTermCount(termCountJ: number, order: SurrogateOrder): number {
  return order === 1 ? 1 + termCountJ : 1 + termCountJ + (termCountJ * (termCountJ + 1)) / 2;
}

/**
 * Check a list of Noll indices used as the model's variables (the core's one Noll-list check).
 * @throws {RangeError} as {@link requireNollIndices}, naming the list "nollIndices"
 */
export function checkNollIndices(nollIndices: readonly number[]): void {
  requireNollIndices(nollIndices, "nollIndices");
}

/** A term as text: `1`, `Z5`, `Z5*Z7`, used in messages and reports. */
export function termLabel(term: Term): string {
  return term.length === 0 ? "1" : term.map((j) => `Z${j}`).join("*");
}

/**
 * Term list compiled against the model's variables: `first[t]`/`second[t]` are positions in `nollIndices`
 * (-1 where the term has no such factor), so features are computed without lookups.
 */
export interface CompiledTerms {
  count: number;
  first: Int32Array;
  second: Int32Array;
  degree: Uint8Array;
}

/**
 * Check a term list (any subset of the full second-order list: each term `[]`, `[i]` or `[i, j]` with both
 * indices among `nollIndices` and `i` not after `j` in that order, no term twice) and compile it.
 * @throws {RangeError} "term list must not be empty" / "term [..] has more than two factors" /
 *   "term [..] uses Noll index N, which is not in the model" / "term [..] must list its indices in model order" /
 *   "term [..] appears twice"
 */
export function compileTerms(terms: readonly Term[], nollIndices: readonly number[]): CompiledTerms {
  checkNollIndices(nollIndices);
  if (terms.length === 0) throw new RangeError("term list must not be empty");
  const position = new Map(nollIndices.map((j, k) => [j, k]));
  const first = new Int32Array(terms.length).fill(-1);
  const second = new Int32Array(terms.length).fill(-1);
  const degree = new Uint8Array(terms.length);
  const seen = new Set<string>();
  terms.forEach((term, t) => {
    const name = `[${term.join(", ")}]`;
    if (!Array.isArray(term)) throw new TypeError("each term must be an array of Noll indices");
    if (term.length > 2) throw new RangeError(`term ${name} has more than two factors`);
    const positions = term.map((j) => {
      const k = position.get(j);
      if (k === undefined) throw new RangeError(`term ${name} uses Noll index ${j}, which is not in the model`);
      return k;
    });
    if (positions.length === 2 && positions[0] > positions[1]) {
      throw new RangeError(`term ${name} must list its indices in model order`);
    }
    if (seen.has(name)) throw new RangeError(`term ${name} appears twice`);
    seen.add(name);
    if (positions.length > 0) first[t] = positions[0];
    if (positions.length > 1) second[t] = positions[1];
    degree[t] = positions.length;
  });
  return { count: terms.length, first, second, degree };
}

/**
 * Features of one wavefront: `f_t = prod of a_i over the term's factors` (1 for the constant term), in nm^degree.
 * @param coefficientsNm Zernike coefficients in the order of the model's `nollIndices`, nm RMS
 * @param out length `terms.count`, overwritten
 */
export function featuresInto(terms: CompiledTerms, coefficientsNm: ArrayLike<number>, out: Float64Array, outOffset = 0): void {
  const { count, first, second } = terms;
  for (let t = 0; t < count; t++) {
    const i = first[t];
    const j = second[t];
    out[outOffset + t] = (i < 0 ? 1 : coefficientsNm[i]) * (j < 0 ? 1 : coefficientsNm[j]);
  }
}

/**
 * Feature matrix (row-major `samples x terms`) for a row-major `samples x J` coefficient matrix in nm.
 * @throws {RangeError} "coefficient matrix length must be a multiple of J"
 */
export function featureMatrix(terms: CompiledTerms, coefficientsNm: ArrayLike<number>, termCountJ: number): Float64Array {
  if (termCountJ < 1 || coefficientsNm.length % termCountJ !== 0) {
    throw new RangeError("coefficient matrix length must be a multiple of J");
  }
  const samples = coefficientsNm.length / termCountJ;
  const out = new Float64Array(samples * terms.count);
  const row = new Float64Array(termCountJ);
  for (let s = 0; s < samples; s++) {
    for (let k = 0; k < termCountJ; k++) row[k] = coefficientsNm[s * termCountJ + k];
    featuresInto(terms, row, out, s * terms.count);
  }
  return out;
}
