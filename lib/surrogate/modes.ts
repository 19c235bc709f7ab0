import { Matrix, SingularValueDecomposition } from "ml-matrix";
import { householderQr } from "../linalg/index.ts";
import { requireFiniteCoefficients } from "../optics/checks.ts";
import type { SurrogateModel } from "./model.ts";
import { compiledTermsOf } from "./evaluate.ts";

/** One coupling mode: a unit-norm combination of the model's terms and the linear TTL it produces. */
export interface CouplingMode {
  /** sigma_k: the 2-norm of the stacked linear TTL maps of the unit-norm combination, pm/nrad per nm. */
  singularValue: number;
  /** v_k in the model's Noll order (unit 2-norm), dimensionless weights of 1 nm of the mode. */
  coefficients: Float64Array;
  /** L v_k: linear TTL of 1 nm of the mode, `[c_x map, c_y map]`, pm/nrad. */
  map: Float64Array;
}

/**
 * The stacked linear maps `L` (2 M^2 x J): column i is the linear coefficient map `A_i` of the model (both axes
 * stacked), zero for a term the model lacks. Row-major.
 */
export function linearMapMatrix(model: SurrogateModel): Float64Array {
  const J = model.nollIndices.length;
  const P = 2 * model.pointsPerAxis * model.pointsPerAxis;
  const { count, first, degree } = compiledTermsOf(model);
  const out = new Float64Array(P * J);
  for (let t = 0; t < count; t++) {
    if (degree[t] !== 1) continue;
    const i = first[t];
    for (let p = 0; p < P; p++) out[p * J + i] += model.coefficients[t * P + p];
  }
  return out;
}

/**
 * Coupling modes: the singular value decomposition `L = U Sigma V^T` of the linear maps of all nodes and both axes
 * stacked (2 M^2 x J); the columns of V are orthonormal combinations of terms ordered from the most to the least
 * coupling, `sigma_k = ||L v_k||` (G. H. Golub and C. F. Van Loan, Matrix Computations, 4th ed., section 2.4).
 * Computed as `L = Q R` (Householder, lib/linalg) and the SVD of the small `R = U_R Sigma V^T` (ml-matrix's
 * Golub-Kahan SVD), which has the same singular values and right vectors (Golub and Van Loan, section 8.6.3,
 * "R-SVD"); measured 3 x faster than the SVD of the tall L (bench:analysis). Each mode's sign is fixed so that its largest weight is
 * positive. `L = sum_k sigma_k u_k v_k^T` reproduces the linear maps.
 *
 * @returns J modes, strongest first (a mode with sigma 0 spans terms with no linear coupling)
 * Source: PHYSICS.md section 6.
 */
export function couplingModes(model: SurrogateModel): CouplingMode[] {
  const J = model.nollIndices.length;
  const P = 2 * model.pointsPerAxis * model.pointsPerAxis;
  const L = linearMapMatrix(model);
  let small: Matrix;
  if (P >= J) {
    const { factors } = householderQr(L, P, J);
    small = new Matrix(J, J);
    for (let i = 0; i < J; i++) for (let j = i; j < J; j++) small.set(i, j, factors[j * P + i]);
  } else {
    const rows: number[][] = new Array(P);
    for (let p = 0; p < P; p++) rows[p] = Array.from(L.subarray(p * J, (p + 1) * J));
    small = new Matrix(rows);
  }
  const svd = new SingularValueDecomposition(small, { computeLeftSingularVectors: false, computeRightSingularVectors: true, autoTranspose: true });
  const V = svd.rightSingularVectors;
  const sigma = svd.diagonal;
  const order = sigma.map((_, k) => k).sort((a, b) => sigma[b] - sigma[a]);
  return order.map((k) => {
    const v = new Float64Array(J);
    let largest = 0;
    for (let i = 0; i < J; i++) {
      v[i] = V.get(i, k);
      if (Math.abs(v[i]) > Math.abs(largest)) largest = v[i];
    }
    if (largest < 0) for (let i = 0; i < J; i++) v[i] = -v[i];
    const map = new Float64Array(P);
    let norm2 = 0;
    for (let p = 0; p < P; p++) {
      let s = 0;
      for (let i = 0; i < J; i++) s += L[p * J + i] * v[i];
      map[p] = s;
      norm2 += s * s;
    }
    // sigma from the map itself, so that it and the map agree to rounding.
    return { singularValue: Math.sqrt(norm2), coefficients: v, map };
  });
}

/** How one wavefront's linear TTL splits over the modes. */
export interface ModeProjection {
  /** `v_k . a`, nm, per mode. */
  amplitudesNm: Float64Array;
  /** Share of `||L a||^2` carried by each mode: `sigma_k^2 (v_k . a)^2 / ||L a||^2` (sums to 1; 0 when L a = 0). */
  energyFraction: Float64Array;
  /** Largest |linear TTL| of each mode's part `(v_k . a) L v_k` over nodes and axes, pm/nrad. */
  peakPmPerNrad: Float64Array;
}

/**
 * Project a wavefront onto the coupling modes: `a = sum_k (v_k . a) v_k` (V orthonormal, so this is exact for
 * the full set), and its linear TTL `L a = sum_k (v_k . a) L v_k`, whose parts are orthogonal (the columns of U
 * are), so the energies add.
 *
 * @param coefficientsNm in the model's Noll order, nm
 * @throws {RangeError} "coefficients must have one entry per mode term" and the core's finite-coefficient check
 */
export function projectOntoModes(modes: readonly CouplingMode[], coefficientsNm: ArrayLike<number>, nollIndices: readonly number[]): ModeProjection {
  requireFiniteCoefficients(coefficientsNm, nollIndices);
  const K = modes.length;
  const amplitudes = new Float64Array(K);
  const energy = new Float64Array(K);
  const peaks = new Float64Array(K);
  let total = 0;
  modes.forEach((mode, k) => {
    if (mode.coefficients.length !== coefficientsNm.length) throw new RangeError("coefficients must have one entry per mode term");
    let s = 0;
    for (let i = 0; i < coefficientsNm.length; i++) s += mode.coefficients[i] * coefficientsNm[i];
    amplitudes[k] = s;
    energy[k] = mode.singularValue * mode.singularValue * s * s;
    total += energy[k];
    let peak = 0;
    for (let p = 0; p < mode.map.length; p++) peak = Math.max(peak, Math.abs(s * mode.map[p]));
    peaks[k] = peak;
  });
  for (let k = 0; k < K; k++) energy[k] = total > 0 ? energy[k] / total : 0;
  return { amplitudesNm: amplitudes, energyFraction: energy, peakPmPerNrad: peaks };
}
