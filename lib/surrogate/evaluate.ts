import { requireFiniteCoefficients } from "../optics/checks.ts";
import { multiplyPackedInto, packColumns, type PackedColumns } from "../linalg/index.ts";
import { interpolateMap } from "./interpolate.ts";
import type { SurrogateModel } from "./model.ts";
import { compileTerms, featureMatrix, featuresInto, type CompiledTerms } from "./terms.ts";
import { validityWarnings } from "./validity.ts";

interface Prepared {
  terms: CompiledTerms;
  /** Features of one wavefront, padded with zeros to a whole number of term blocks. */
  features: Float64Array;
  packed: PackedColumns | null;
  interleaved: Float64Array | null;
}

const prepared = new WeakMap<SurrogateModel, Prepared>();

/** Compiled terms and scratch space of a model, made once per model object (models are not mutated). */
function prepare(model: SurrogateModel): Prepared {
  let entry = prepared.get(model);
  if (!entry) {
    const terms = compileTerms(model.terms, model.nollIndices);
    const outputs = 2 * model.pointsPerAxis * model.pointsPerAxis;
    if (model.coefficients.length !== terms.count * outputs) {
      throw new RangeError("model coefficients must have terms x 2 M^2 entries");
    }
    entry = {
      terms,
      features: new Float64Array(Math.ceil(terms.count / TERM_BLOCK) * TERM_BLOCK),
      packed: null,
      interleaved: null,
    };
    prepared.set(model, entry);
  }
  return entry;
}

/** Compiled term list of a model (cached). */
export function compiledTermsOf(model: SurrogateModel): CompiledTerms {
  return prepare(model).terms;
}

/**
 * Check a coefficient vector (model Noll order, nm RMS) or a row-major batch of them: the core's one
 * finite-coefficient check, {@link requireFiniteCoefficients}.
 * @returns the number of wavefronts
 * @throws {RangeError} as {@link requireFiniteCoefficients}
 */
export function checkCoefficients(model: SurrogateModel, coefficientsNm: ArrayLike<number>, batch = false): number {
  return requireFiniteCoefficients(coefficientsNm, model.nollIndices, batch);
}

/** Terms per block of the interleaved layout used by {@link evaluateInto}. */
const TERM_BLOCK = 16;

/**
 * The term-major coefficients rearranged for single-map evaluation: blocks of 8 terms, and within a block
 * the 16 coefficients of each output side by side (`[block][output][16]`, zero padded), so that one pass over
 * the outputs reads one contiguous stream. Measured about 1.4 x faster than separate term rows; blocks of 16 halve the passes over `out` and measured 5-10 % faster than blocks of 8.
 */
function interleaved(model: SurrogateModel, entry: Prepared): Float64Array {
  if (!entry.interleaved) {
    const T = entry.terms.count;
    const P = 2 * model.pointsPerAxis * model.pointsPerAxis;
    const blocks = Math.ceil(T / TERM_BLOCK);
    const data = new Float64Array(blocks * P * TERM_BLOCK);
    const c = model.coefficients;
    for (let t = 0; t < T; t++) {
      const block = Math.floor(t / TERM_BLOCK);
      const lane = t % TERM_BLOCK;
      const row = t * P;
      const base = block * P * TERM_BLOCK + lane;
      for (let p = 0; p < P; p++) data[base + p * TERM_BLOCK] = c[row + p];
    }
    entry.interleaved = data;
  }
  return entry.interleaved;
}

/**
 * Full surrogate map of one wavefront: `out[p] = sum_t f_t(a) C[t][p]` for all `2 M^2` outputs
 * (`[c_x map, c_y map]`, pm/nrad): one pass over the outputs per block of 16 terms, reading the
 * interleaved copy of the coefficients.
 *
 * @param coefficientsNm in the model's Noll order, nm RMS
 * @param out length `2 M^2`, overwritten
 * @throws {RangeError} from {@link checkCoefficients}; "out must have 2 M^2 entries"
 * Source: PHYSICS.md section 5 (surrogate polynomial).
 */
export function evaluateInto(model: SurrogateModel, coefficientsNm: ArrayLike<number>, out: Float64Array): void {
  const entry = prepare(model);
  const { terms, features: f } = entry;
  checkCoefficients(model, coefficientsNm);
  const P = 2 * model.pointsPerAxis * model.pointsPerAxis;
  if (out.length !== P) throw new RangeError("out must have 2 M^2 entries");
  featuresInto(terms, coefficientsNm, f);
  accumulateInterleaved(interleaved(model, entry), f, P, out);
}

/** `out[p] = sum_t f[t] c[t][p]` over the interleaved layout; a small function of its own so the JIT keeps it tight. */
function accumulateInterleaved(c: Float64Array, f: Float64Array, P: number, out: Float64Array): void {
  const blocks = f.length >> 4;
  out.fill(0);
  let i = 0;
  for (let block = 0; block < blocks; block++) {
    const t = block << 4;
    const f0 = f[t], f1 = f[t + 1], f2 = f[t + 2], f3 = f[t + 3];
    const f4 = f[t + 4], f5 = f[t + 5], f6 = f[t + 6], f7 = f[t + 7];
    const f8 = f[t + 8], f9 = f[t + 9], f10 = f[t + 10], f11 = f[t + 11];
    const f12 = f[t + 12], f13 = f[t + 13], f14 = f[t + 14], f15 = f[t + 15];
    for (let p = 0; p < P; p++, i += 16) {
      out[p] +=
        (f0 * c[i] + f1 * c[i + 1] + (f2 * c[i + 2] + f3 * c[i + 3])) +
        (f4 * c[i + 4] + f5 * c[i + 5] + (f6 * c[i + 6] + f7 * c[i + 7])) +
        ((f8 * c[i + 8] + f9 * c[i + 9] + (f10 * c[i + 10] + f11 * c[i + 11])) +
        (f12 * c[i + 12] + f13 * c[i + 13] + (f14 * c[i + 14] + f15 * c[i + 15])));
    }
  }
}

/** A surrogate map with the validity warnings of its wavefront. */
export interface SurrogateMap {
  /** c_x, row-major `[iy][ix]`, pm/nrad. */
  x: Float64Array;
  y: Float64Array;
  warnings: string[];
}

/**
 * Full surrogate map of one wavefront, with warnings naming whatever lies outside the validity range
 * (the map is evaluated all the same).
 * @throws {RangeError} from {@link checkCoefficients}
 */
export function evaluateMap(model: SurrogateModel, coefficientsNm: ArrayLike<number>): SurrogateMap {
  const nodes = model.pointsPerAxis * model.pointsPerAxis;
  const out = new Float64Array(2 * nodes);
  evaluateInto(model, coefficientsNm, out);
  checkFinite(out);
  return { x: out.subarray(0, nodes), y: out.subarray(nodes), warnings: validityWarnings(model.validity, coefficientsNm) };
}

/** The coefficient matrix packed for batched products (cached per model). */
export function packedCoefficients(model: SurrogateModel): PackedColumns {
  const entry = prepare(model);
  if (!entry.packed) {
    entry.packed = packColumns(model.coefficients, entry.terms.count, 2 * model.pointsPerAxis * model.pointsPerAxis);
  }
  return entry.packed;
}

/**
 * Surrogate maps of many wavefronts as one matrix product: features `F` (S x T) times coefficients (T x 2 M^2),
 * with the register-blocked kernel of `lib/linalg`. Rows `[rowStart, rowEnd)` only, so that threads can share
 * the work.
 *
 * @param coefficientsNm row-major `S x J`, model Noll order, nm RMS
 * @param out row-major `S x 2 M^2` (`[c_x map, c_y map]` per wavefront), pm/nrad
 * @throws {RangeError} from {@link checkCoefficients}; "out must have S x 2 M^2 entries"
 * Source: PHYSICS.md section 5; Goto and van de Geijn (2008) for the product.
 */
export function evaluateBatchInto(
  model: SurrogateModel,
  coefficientsNm: ArrayLike<number>,
  out: Float64Array,
  rowStart = 0,
  rowEnd?: number,
): void {
  const samples = checkCoefficients(model, coefficientsNm, true);
  const P = 2 * model.pointsPerAxis * model.pointsPerAxis;
  if (out.length !== samples * P) throw new RangeError("out must have S x 2 M^2 entries");
  const end = rowEnd ?? samples;
  if (end <= rowStart) return;
  const { terms } = prepare(model);
  const J = model.nollIndices.length;
  const slice = Array.prototype.slice.call(coefficientsNm, rowStart * J, end * J) as number[];
  const features = featureMatrix(terms, slice, J);
  multiplyPackedInto(features, end - rowStart, packedCoefficients(model), out.subarray(rowStart * P, end * P));
}

/** {@link evaluateBatchInto} over all rows, returning a new `S x 2 M^2` array. */
export function evaluateBatch(model: SurrogateModel, coefficientsNm: ArrayLike<number>): Float64Array {
  const samples = checkCoefficients(model, coefficientsNm, true);
  const out = new Float64Array(samples * 2 * model.pointsPerAxis * model.pointsPerAxis);
  evaluateBatchInto(model, coefficientsNm, out);
  checkFinite(out);
  return out;
}

/**
 * Refuse a result that overflowed (coefficients so large that a product of two is beyond double range).
 * @throws {RangeError} "wavefront coefficients are too large: the surrogate TTL is not finite"
 */
export function checkFinite(values: Float64Array): void {
  for (let i = 0; i < values.length; i++) {
    if (!Number.isFinite(values[i])) throw new RangeError("wavefront coefficients are too large: the surrogate TTL is not finite");
  }
}

/**
 * Surrogate TTL at arbitrary DC offsets inside the map: the full map, then bicubic (Keys) interpolation
 * between nodes for each offset.
 * @param thetaXNrad, thetaYNrad offsets, nrad, same length
 * @returns c_x and c_y at each offset, pm/nrad, with validity warnings
 * @throws {RangeError} "thetaXNrad and thetaYNrad must have the same length"; outside the map:
 *   "DC offset T nrad is outside the map (|theta| <= h nrad)"
 * Source: Keys (1981), see `interpolate.ts`.
 */
export function evaluateAtOffsets(
  model: SurrogateModel,
  coefficientsNm: ArrayLike<number>,
  thetaXNrad: ArrayLike<number>,
  thetaYNrad: ArrayLike<number>,
): SurrogateMap {
  if (thetaXNrad.length !== thetaYNrad.length) throw new RangeError("thetaXNrad and thetaYNrad must have the same length");
  const map = evaluateMap(model, coefficientsNm);
  const h = model.setup.farField.halfAngleNrad;
  const M = model.pointsPerAxis;
  const x = new Float64Array(thetaXNrad.length);
  const y = new Float64Array(thetaXNrad.length);
  for (let i = 0; i < x.length; i++) {
    x[i] = interpolateMap(map.x, h, M, thetaXNrad[i], thetaYNrad[i]);
    y[i] = interpolateMap(map.y, h, M, thetaXNrad[i], thetaYNrad[i]);
  }
  return { x, y, warnings: map.warnings };
}
