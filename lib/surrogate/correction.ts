import { Matrix, QrDecomposition } from "ml-matrix";
import { requireFiniteCoefficients } from "../optics/checks.ts";
import { compiledTermsOf, evaluateInto } from "./evaluate.ts";
import type { SurrogateModel } from "./model.ts";

export interface CorrectionResult {
  /** The adjustment, model Noll order, nm (zero outside the adjustable terms). */
  adjustmentNm: Float64Array;
  /** Wavefront plus adjustment. */
  correctedNm: Float64Array;
  /** Largest |c| over nodes and axes before and after, pm/nrad (after <= before always). */
  beforePeakPmPerNrad: number;
  afterPeakPmPerNrad: number;
  /** Refinement steps taken after the first (linear least-squares) step. */
  iterations: number;
}

const ITERATIONS = 40;

/**
 * Largest |c_p| of a coefficient vector over all outputs, and the map into `out`.
 */
function peakOf(model: SurrogateModel, a: Float64Array, out: Float64Array): number {
  evaluateInto(model, a, out);
  let peak = 0;
  for (let p = 0; p < out.length; p++) peak = Math.max(peak, Math.abs(out[p]));
  return peak;
}

/**
 * Jacobian `dc_p / da_k` for the adjustable positions at `a`: `sum_t C_tp df_t/da_k` with `df/da` of `[i]` = 1,
 * of `[i, j]` = `a_j` (k = i) + `a_i` (k = j). Row-major `P x K`.
 */
function jacobian(model: SurrogateModel, a: Float64Array, positions: readonly number[], out: Float64Array): void {
  const P = 2 * model.pointsPerAxis * model.pointsPerAxis;
  const K = positions.length;
  const { count, first, second, degree } = compiledTermsOf(model);
  out.fill(0);
  const c = model.coefficients;
  for (let k = 0; k < K; k++) {
    const q = positions[k];
    for (let t = 0; t < count; t++) {
      if (degree[t] === 0) continue;
      let derivative = 0;
      if (degree[t] === 1) derivative = first[t] === q ? 1 : 0;
      else {
        if (first[t] === q) derivative += a[second[t]];
        if (second[t] === q) derivative += a[first[t]];
      }
      if (derivative === 0) continue;
      const row = t * P;
      for (let p = 0; p < P; p++) out[p * K + k] += derivative * c[row + p];
    }
  }
}

/**
 * Weighted linear least squares `min sum_p w_p (r_p + J_p . delta)^2` by Householder QR of `sqrt(w) J`
 * (ml-matrix), with the columns scaled to unit length first; a column with no effect gets no step.
 */
function weightedStep(jac: Float64Array, residual: Float64Array, weights: Float64Array, P: number, K: number): Float64Array {
  const scale = new Float64Array(K);
  for (let k = 0; k < K; k++) {
    let s = 0;
    for (let p = 0; p < P; p++) s += weights[p] * jac[p * K + k] ** 2;
    scale[k] = s > 0 ? 1 / Math.sqrt(s) : 0;
  }
  const active = [...Array(K).keys()].filter((k) => scale[k] > 0);
  const step = new Float64Array(K);
  if (active.length === 0) return step;
  const rows: number[][] = new Array(P);
  const rhs: number[][] = new Array(P);
  for (let p = 0; p < P; p++) {
    const w = Math.sqrt(weights[p]);
    rows[p] = active.map((k) => w * jac[p * K + k] * scale[k]);
    rhs[p] = [-w * residual[p]];
  }
  const qr = new QrDecomposition(new Matrix(rows));
  if (!qr.isFullRank()) return step;
  const solution = qr.solve(new Matrix(rhs));
  active.forEach((k, n) => (step[k] = solution.get(n, 0) * scale[k]));
  return step;
}

/**
 * Adjustment of some terms that minimises the worst |TTL| over the map on the model:
 * `min over d of max_p |c_p(w + E d)|` subject to `|d_k| <= limit` for each adjustable term k (a box: each term's
 * own range, as an actuator or a polishing step has one). Method: a Gauss-Newton step of the linearised model
 * from zero (the linear least-squares solution), then minimax refinement by Lawson's iteratively reweighted least
 * squares (weights multiplied by each output's |c| and renormalised, which drives the least-squares solution towards
 * the minimax one), each step relinearised with the second-order terms, projected onto the box and accepted only
 * if the peak drops (with step halving). The best point seen is returned, and never one whose peak is above the
 * starting peak: without an improvement the adjustment is zero. A local method: the result is the best found, not
 * a certified global minimum.
 *
 * @param coefficientsNm the known wavefront, model Noll order, nm
 * @param adjustable positions in the model's variables (0-based), distinct
 * @param limitNm per-term limit of the adjustment, nm (> 0)
 * @throws {RangeError} the core's finite-coefficient check; "limitNm must be a finite number > 0";
 *   "adjustable terms must be distinct positions among the model's J variables"
 * Source: C. L. Lawson, "Contributions to the theory of linear least maximum approximation", PhD thesis, UCLA
 * (1961), as described by J. R. Rice and K. H. Usow, Math. Comp. 22, 118-127 (1968); Gauss-Newton: J. Nocedal and
 * S. J. Wright, Numerical Optimization, 2nd ed., section 10.3.
 */
export function correctWavefront(model: SurrogateModel, coefficientsNm: ArrayLike<number>, adjustable: readonly number[], limitNm: number): CorrectionResult {
  requireFiniteCoefficients(coefficientsNm, model.nollIndices);
  if (typeof limitNm !== "number" || !Number.isFinite(limitNm) || limitNm <= 0) throw new RangeError("limitNm must be a finite number > 0");
  const J = model.nollIndices.length;
  if (adjustable.length === 0 || new Set(adjustable).size !== adjustable.length || adjustable.some((k) => !Number.isInteger(k) || k < 0 || k >= J)) {
    throw new RangeError("adjustable terms must be distinct positions among the model's J variables");
  }
  const P = 2 * model.pointsPerAxis * model.pointsPerAxis;
  const K = adjustable.length;
  const base = Float64Array.from(coefficientsNm);
  const map = new Float64Array(P);
  const before = peakOf(model, base, map);

  const trial = new Float64Array(J);
  const withAdjustment = (d: Float64Array) => {
    trial.set(base);
    for (let k = 0; k < K; k++) trial[adjustable[k]] += d[k];
    return trial;
  };
  const clip = (d: Float64Array) => d.map((v) => Math.max(-limitNm, Math.min(limitNm, v)));

  let best = new Float64Array(K);
  let bestPeak = before;
  let current = new Float64Array(K);
  let currentPeak = before;
  const residual = new Float64Array(P);
  const jac = new Float64Array(P * K);
  const weights = new Float64Array(P).fill(1 / P);
  let iterations = 0;
  for (let iteration = 0; iteration <= ITERATIONS; iteration++) {
    peakOf(model, withAdjustment(current), residual);
    jacobian(model, trial, adjustable, jac);
    if (iteration > 0) {
      // Lawson's update: w_p <- w_p |r_p| / sum_q w_q |r_q|.
      let total = 0;
      for (let p = 0; p < P; p++) total += weights[p] * Math.abs(residual[p]);
      if (!(total > 0)) break;
      for (let p = 0; p < P; p++) weights[p] = (weights[p] * Math.abs(residual[p])) / total;
    }
    const step = weightedStep(jac, residual, weights, P, K);
    let accepted = false;
    for (let length = 1; length >= 1 / 64; length /= 2) {
      const candidate = clip(current.map((v, k) => v + length * step[k]));
      const peak = peakOf(model, withAdjustment(candidate), map);
      if (peak < currentPeak) {
        current = candidate;
        currentPeak = peak;
        accepted = true;
        break;
      }
    }
    if (iteration > 0) iterations++;
    if (currentPeak < bestPeak) {
      best = current.slice();
      bestPeak = currentPeak;
    }
    // The reweighting continues even without an accepted step: the weights move towards the active outputs.
    if (!accepted && iteration > 8) break;
  }
  let adjustment = new Float64Array(J);
  if (bestPeak < before) for (let k = 0; k < K; k++) adjustment[adjustable[k]] = best[k];
  let corrected = base.map((v, i) => v + adjustment[i]);
  let after = peakOf(model, corrected, map);
  if (!(after < before)) {
    adjustment = new Float64Array(J);
    corrected = base.slice();
    after = before;
  }
  return { adjustmentNm: adjustment, correctedNm: corrected, beforePeakPmPerNrad: before, afterPeakPmPerNrad: after, iterations };
}
