import { kernelInstance, MODE_SET, type KernelInstance } from "../kernels/instance.ts";
import { packColumns, type PackedColumns } from "../linalg/index.ts";
import { multiplyPackedIntoReference } from "../linalg/matrixProduct.ts";
import { requireFiniteCoefficients } from "../optics/checks.ts";
import { interpolateMap } from "./interpolate.ts";
import type { SurrogateModel } from "./model.ts";
import { compileTerms, featuresInto, type CompiledTerms } from "./terms.ts";
import { validityWarnings } from "./validity.ts";

interface Prepared {
  terms: CompiledTerms;
  /** Features of one wavefront, padded with zeros to a whole number of term blocks. */
  features: Float64Array;
  packed: PackedColumns | null;
  interleaved: Float64Array | null;
  /** True when every coefficient is a float32 value (a stored model): the kernels then compute in float32. */
  storedAsFloat32: boolean;
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
      storedAsFloat32: isFloat32Exact(model.coefficients),
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
 * (`[c_x map, c_y map]`, pm/nrad), as a matrix-vector product by the SIMD kernel of `lib/kernels`.
 * A stored model (every coefficient a float32, see `roundToStored`) is evaluated in float32: the features are
 * rounded to float32 and each output is a float32 inner product of length T, so that
 * `|out - exact| <= gamma_(T+1) sum_t |f_t| |C[t][p]|`, `gamma_n = n u / (1 - n u)`, `u = 2^-24`
 * (N. J. Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., section 3.1, eq. 3.5); other models
 * are evaluated in float64. Without WebAssembly the float64 TypeScript loop over an interleaved copy runs.
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
  const kernels = kernelInstance();
  const T = terms.count;
  if (!kernels || !inFloat32Range(f, 0, T, entry)) {
    accumulateInterleaved(interleaved(model, entry), f, P, out);
    return;
  }
  const b = residentCoefficients(kernels, model, entry);
  const single = entry.storedAsFloat32;
  const size = single ? 4 : 8;
  const width = single ? F32_PANEL : F64_PANEL;
  const fp = kernels.scratch(T * size);
  const op = kernels.scratch(Math.ceil(P / width) * width * size);
  if (single) {
    const heap = kernels.f32;
    const base = fp >> 2;
    for (let t = 0; t < T; t++) heap[base + t] = f[t];
    kernels.exports.gemvF32(T, P, fp, b, T * width, op);
    const o = op >> 2;
    for (let p = 0; p < P; p++) out[p] = heap[o + p];
  } else {
    const heap = kernels.f64;
    const base = fp >> 3;
    for (let t = 0; t < T; t++) heap[base + t] = f[t];
    kernels.exports.gemvF64(T, P, fp, b, T * width, op);
    const o = op >> 3;
    for (let p = 0; p < P; p++) out[p] = heap[o + p];
  }
}

/** Column panel widths of the kernels' packed coefficients: two 128-bit vectors of float32 or of float64. */
const F32_PANEL = 8;
const F64_PANEL = 4;

/** Largest feature magnitude sent to the float32 kernels (2^100): far inside float32 range, so no overflow. */
const FLOAT32_FEATURE_LIMIT = 2 ** 100;

/** Whether every value is exactly a float32 (true for coefficients read from a model file, see roundToStored). */
function isFloat32Exact(values: Float64Array): boolean {
  for (let i = 0; i < values.length; i++) if (Math.fround(values[i]) !== values[i]) return false;
  return true;
}

/**
 * Whether features f[from .. to) can go through the float32 kernels: always for a float64 model, and for a
 * stored model while no feature is beyond {@link FLOAT32_FEATURE_LIMIT} (the float64 reference takes those, so
 * a huge wavefront overflows, or not, exactly as it did before).
 */
function inFloat32Range(f: Float64Array, from: number, to: number, entry: Prepared): boolean {
  if (!entry.storedAsFloat32) return true;
  for (let i = from; i < to; i++) if (!(Math.abs(f[i]) <= FLOAT32_FEATURE_LIMIT)) return false;
  return true;
}

/**
 * The model's coefficients packed in column panels inside the kernel module's memory (float32 for a stored
 * model, float64 otherwise), made once per model and thread. Starts a kernel call (see KernelInstance).
 */
function residentCoefficients(kernels: KernelInstance, model: SurrogateModel, entry: Prepared): number {
  const T = entry.terms.count;
  const P = 2 * model.pointsPerAxis * model.pointsPerAxis;
  const single = entry.storedAsFloat32;
  const width = single ? F32_PANEL : F64_PANEL;
  const size = single ? 4 : 8;
  const bytes = Math.ceil(P / width) * width * T * size;
  return kernels.resident(entry, bytes, (ptr) => {
    const source = kernels.scratch(T * P * size);
    if (single) {
      kernels.f32.set(model.coefficients, source >> 2);
      kernels.exports.packPanelsF32(source, P, 0, T, P, ptr, T * width);
    } else {
      kernels.f64.set(model.coefficients, source >> 3);
      kernels.exports.packPanelsF64(source, P, 0, T, P, ptr, T * width);
    }
  });
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
 * by the blocked SIMD kernel of `lib/kernels` (float32 for a stored model, with the error bound of
 * {@link evaluateInto}; float64 otherwise). Rows `[rowStart, rowEnd)` only, so that threads can share the work;
 * each row's result does not depend on how the rows are shared.
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
  runBatch(model, coefficientsNm, rowStart, end, out, null);
}

/**
 * Peak |TTL| of each of many wavefronts without keeping their maps: `peaks[s] = max_p |c_p(a_s)|` over both axes
 * and all nodes (pm/nrad), for rows `[rowStart, rowEnd)`; the same numbers as the largest `|value|` of each row of
 * {@link evaluateBatchInto} (computed from the same sums, bit for bit), with the maps never leaving the kernel
 * module. For Monte Carlo runs that need only each wavefront's peak.
 *
 * @param coefficientsNm row-major `S x J`, model Noll order, nm RMS
 * @param peaks length S, pm/nrad
 * @throws {RangeError} from {@link checkCoefficients}; "peaks must have S entries"; from {@link checkFinite}
 */
export function evaluateBatchPeaksInto(
  model: SurrogateModel,
  coefficientsNm: ArrayLike<number>,
  peaks: Float64Array,
  rowStart = 0,
  rowEnd?: number,
): void {
  const samples = checkCoefficients(model, coefficientsNm, true);
  if (peaks.length !== samples) throw new RangeError("peaks must have S entries");
  const end = rowEnd ?? samples;
  if (end <= rowStart) return;
  runBatch(model, coefficientsNm, rowStart, end, null, peaks);
  checkFinite(peaks.subarray(rowStart, end));
}

/** Numbers per wavefront in {@link summariseMapsInto}'s output. */
export const MAP_SUMMARY_WIDTH = 4;

/**
 * What an evaluation reports of each map without the map itself: for wavefront s, `out[4s]` the peak |TTL| over both
 * axes and all nodes (pm/nrad; NaN when any value is not finite), `out[4s+1]` its node (row-major `iy * M + ix`),
 * `out[4s+2]` its axis (0 for x, 1 for y; x wins a tie), `out[4s+3]` the largest `c_x^2 + c_y^2` over the nodes
 * ((pm/nrad)^2, for the length noise of a pointing jitter, PHYSICS.md section 6).
 * @param maps row-major `count x [c_x map, c_y map]`, each map `nodes` long
 * @param out `count x 4`
 * @throws {RangeError} "maps must hold count x 2 x nodes values" / "out must hold count x 4 values"
 */
export function summariseMapsInto(maps: Float64Array, nodes: number, count: number, out: Float64Array): void {
  if (maps.length < count * 2 * nodes) throw new RangeError("maps must hold count x 2 x nodes values");
  if (out.length < count * MAP_SUMMARY_WIDTH) throw new RangeError("out must hold count x 4 values");
  for (let s = 0; s < count; s++) {
    const base = s * 2 * nodes;
    let peak = -1;
    let peakNode = 0;
    let peakAxis = 0;
    let noise = 0;
    let finite = true;
    for (let n = 0; n < nodes; n++) {
      const cx = maps[base + n];
      const cy = maps[base + nodes + n];
      const ax = Math.abs(cx);
      const ay = Math.abs(cy);
      if (ax > peak) {
        peak = ax;
        peakNode = n;
        peakAxis = 0;
      }
      if (ay > peak) {
        peak = ay;
        peakNode = n;
        peakAxis = 1;
      }
      const magnitude = cx * cx + cy * cy;
      if (magnitude > noise) noise = magnitude;
      if (!(ax < Infinity && ay < Infinity)) finite = false;
    }
    out[s * MAP_SUMMARY_WIDTH] = finite ? peak : Number.NaN;
    out[s * MAP_SUMMARY_WIDTH + 1] = peakNode;
    out[s * MAP_SUMMARY_WIDTH + 2] = peakAxis;
    out[s * MAP_SUMMARY_WIDTH + 3] = noise;
  }
}

/** The chunked batch product behind {@link evaluateBatchInto} (maps) and {@link evaluateBatchPeaksInto} (peaks). */
function runBatch(
  model: SurrogateModel,
  coefficientsNm: ArrayLike<number>,
  rowStart: number,
  end: number,
  maps: Float64Array | null,
  peaks: Float64Array | null,
): void {
  const entry = prepare(model);
  const { terms } = entry;
  const J = model.nollIndices.length;
  const P = 2 * model.pointsPerAxis * model.pointsPerAxis;
  const T = terms.count;
  const kernels = kernelInstance();
  const chunk = Math.min(BATCH_CHUNK, end - rowStart);
  const features = new Float64Array(chunk * T);
  const row = new Float64Array(J);
  // Maps of one chunk when they are computed in TypeScript for the peaks only.
  let scratchMaps: Float64Array | null = null;
  const reference = (rows: number, s0: number) => {
    const target = maps ? maps.subarray(s0 * P, (s0 + rows) * P) : (scratchMaps ??= new Float64Array(chunk * P)).subarray(0, rows * P);
    multiplyPackedIntoReference(features.subarray(0, rows * T), rows, packedCoefficients(model), target);
    if (peaks) {
      for (let s = 0; s < rows; s++) {
        let peak = 0;
        for (let p = s * P; p < (s + 1) * P; p++) {
          const v = Math.abs(target[p]);
          if (!(v <= peak)) peak = v; // NaN propagates, as in the kernel
        }
        peaks[s0 + s] = peak;
      }
    }
  };
  const single = entry.storedAsFloat32;
  const size = single ? 4 : 8;
  const width = single ? F32_PANEL : F64_PANEL;
  let b = 0, fp = 0, cp = 0, pp = 0, work = 0;
  if (kernels) {
    b = residentCoefficients(kernels, model, entry);
    fp = kernels.scratch(chunk * T * size);
    cp = kernels.scratch(chunk * P * size);
    pp = kernels.scratch(chunk * size);
    work = kernels.scratch(kernels.exports.gemmWorkBytes());
  }
  for (let s0 = rowStart; s0 < end; s0 += chunk) {
    const rows = Math.min(chunk, end - s0);
    for (let s = 0; s < rows; s++) {
      for (let k = 0; k < J; k++) row[k] = coefficientsNm[(s0 + s) * J + k];
      featuresInto(terms, row, features, s * T);
    }
    if (!kernels || !inFloat32Range(features, 0, rows * T, entry)) {
      reference(rows, s0);
      continue;
    }
    const heap = single ? kernels.f32 : kernels.f64;
    const shift = single ? 2 : 3;
    heap.set(features.subarray(0, rows * T), fp >> shift);
    if (single) kernels.exports.gemmF32(rows, P, T, fp, T, 0, b, T * width, cp, P, MODE_SET, work);
    else kernels.exports.gemmF64(rows, P, T, fp, T, 0, b, T * width, cp, P, MODE_SET, work);
    if (maps) maps.subarray(s0 * P, (s0 + rows) * P).set(heap.subarray(cp >> shift, (cp >> shift) + rows * P));
    if (peaks) {
      if (single) kernels.exports.rowMaxAbsF32(cp, rows, P, P, pp);
      else kernels.exports.rowMaxAbsF64(cp, rows, P, P, pp);
      peaks.set(heap.subarray(pp >> shift, (pp >> shift) + rows), s0);
    }
  }
}

/** Wavefronts per kernel call of {@link evaluateBatchInto} (features and results of a chunk stay in cache). */
const BATCH_CHUNK = 1024;

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
