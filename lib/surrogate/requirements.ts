import { compiledTermsOf } from "./evaluate.ts";
import type { SurrogateModel } from "./model.ts";
import { SplitMix64 } from "./prng.ts";
import { checkBudgetRmsNm } from "./worstCase.ts";

/** Limits on a wavefront's terms: `|a_i| <= linear[i]` (nm) and `|a_i a_j| <= cross[i][j]` (nm^2). */
export interface TermLimits {
  /** Per variable, model Noll order, nm. */
  linearNm: Float64Array;
  /** Row-major J x J, symmetric (the diagonal is the square terms), nm^2. */
  crossNm2: Float64Array;
  /** The common scale s of the allocation (`linear[i] = min(s w_i, r)`). */
  scale: number;
  /**
   * The bound the limits give at the worst output: `max_p |c0_p| + sum_i |A_i(p)| L_i + sum_{i<=j} |b_ij(p)| K_ij`,
   * pm/nrad (at most the TTL budget, by construction).
   */
  boundPmPerNrad: number;
}

export interface Requirements {
  ttlBudgetPmPerNrad: number;
  budgetRmsNm: number;
  /** The headline: one limit for every linear term and one for every cross term (the same value within each kind). */
  uniform: TermLimits;
  /** Per-term limits: the TTL budget shared among the terms in proportion to each term's coupling (see {@link requirementLimits}). */
  perTerm: TermLimits & {
    /** Each term's coupling g_i: its largest TTL per nm within the WFE budget, pm/nrad per nm (model Noll order). */
    couplingPmPerNradPerNm: Float64Array;
    /** Each term's share of the TTL budget, `(tau - max |c0|) g_i / sum_k g_k`, pm/nrad. */
    sharePmPerNrad: Float64Array;
  };
  /** Largest |c0| over the map (the model's TTL at zero wavefront error), pm/nrad. */
  zeroWfePeakPmPerNrad: number;
}

/**
 * Per-output sums of the allocation for weights `w`: `s1_p = sum_i |A_i(p)| w_i`, `s2_p = sum_{i<=j} |b_ij(p)| w_i w_j`
 * over the model's terms (b the stored coefficients: square terms and products).
 */
function allocationSums(model: SurrogateModel, w: Float64Array): { c0: Float64Array; s1: Float64Array; s2: Float64Array } {
  const P = 2 * model.pointsPerAxis * model.pointsPerAxis;
  const { count, first, second, degree } = compiledTermsOf(model);
  const c0 = new Float64Array(P);
  const s1 = new Float64Array(P);
  const s2 = new Float64Array(P);
  for (let t = 0; t < count; t++) {
    const row = model.coefficients.subarray(t * P, (t + 1) * P);
    if (degree[t] === 0) for (let p = 0; p < P; p++) c0[p] += row[p];
    else if (degree[t] === 1) {
      const weight = w[first[t]];
      for (let p = 0; p < P; p++) s1[p] += Math.abs(row[p]) * weight;
    } else {
      const weight = w[first[t]] * w[second[t]];
      for (let p = 0; p < P; p++) s2[p] += Math.abs(row[p]) * weight;
    }
  }
  return { c0, s1, s2 };
}

/**
 * Limits `L_i = min(s w_i, r)`, `K_ij = L_i L_j` with the largest s such that at every output
 * `s s1_p + s^2 s2_p <= tau - |c0_p|`: the positive root of each quadratic, the smallest over outputs.
 */
function limitsFor(model: SurrogateModel, weights: Float64Array, ttlBudget: number, r: number, uncoupled?: ArrayLike<boolean>): TermLimits {
  const J = model.nollIndices.length;
  const { c0, s1, s2 } = allocationSums(model, weights);
  let scale = Infinity;
  for (let p = 0; p < c0.length; p++) {
    const room = ttlBudget - Math.abs(c0[p]);
    const root = s2[p] > 0 ? (2 * room) / (s1[p] + Math.sqrt(s1[p] * s1[p] + 4 * s2[p] * room)) : s1[p] > 0 ? room / s1[p] : Infinity;
    if (root < scale) scale = root;
  }
  // A hair inside the root, so that rounding in the sums cannot put the bound above the budget.
  scale *= 1 - 1e-12;
  const linear = new Float64Array(J);
  for (let i = 0; i < J; i++) linear[i] = uncoupled?.[i] ? r : Math.min(scale * weights[i], r);
  const cross = new Float64Array(J * J);
  for (let i = 0; i < J; i++) for (let j = 0; j < J; j++) cross[i * J + j] = linear[i] * linear[j];
  // The bound the (capped) limits give, from the maps themselves.
  const actual = allocationSums(model, linear);
  let bound = 0;
  for (let p = 0; p < c0.length; p++) bound = Math.max(bound, Math.abs(c0[p]) + actual.s1[p] + actual.s2[p]);
  return { linearNm: linear, crossNm2: cross, scale: Number.isFinite(scale) ? scale : r, boundPmPerNrad: bound };
}

/**
 * Requirements that guarantee a TTL budget at every node and axis of the map. Derivation: for any wavefront with
 * `|a_i| <= L_i`, every product obeys `|a_i a_j| <= L_i L_j = K_ij`, so by the triangle inequality, at output p,
 * `|c_p(a)| <= |c0_p| + sum_i |A_i(p)| L_i + sum_{i<=j} |b_ij(p)| K_ij` (b the model's square and product
 * coefficients). With `L_i = s w_i` the right side is `|c0_p| + s s1_p + s^2 s2_p`, increasing in s; the largest s
 * keeping it at most the budget tau at every output is the smallest positive root over the outputs. Capping a limit
 * at the WFE budget r (no single term can exceed it) only lowers the right side, so the guarantee holds for every
 * wavefront inside the limits, whatever its total RMS. The bound is taken node by node from the maps, not from
 * per-term maxima, so it is as tight as this kind of bound gets.
 * - `uniform` (the headline): `w_i = 1`, one limit for every linear term and `K = L^2` for every cross term.
 * - `perTerm`: the TTL budget shared among the terms in proportion to each term's coupling. Term i's coupling is its
 *   largest TTL per nm within the WFE budget, `g_i = a_i + r q_i` with `a_i = max_p |A_i(p)|` and
 *   `q_i = max_p sum_j |b_ij(p)|` (its square term and its products); its share is
 *   `tau_i = (tau - max_p |c0_p|) g_i / sum_k g_k`, so the terms that couple most take the largest parts of the
 *   budget. Its own limit is the amplitude at which it uses its share with its products at the same amplitude,
 *   `a_i l_i + q_i l_i^2 = tau_i`, i.e. `l_i = 2 tau_i / (a_i + sqrt(a_i^2 + 4 q_i tau_i))`; then `w_i = l_i`
 *   and the common scale s above makes the guarantee exact node by node (one factor for every term, so the shares
 *   stay in proportion to the couplings). Where the TTL is linear in the terms (q = 0), shares in proportion to
 *   coupling mean `l_i = (tau - max |c0|) / sum_k a_k` for every term: the same limit as the headline; the limits
 *   differ where second-order terms matter (a term coupling through its squares and products reaches its share at a
 *   larger amplitude). A term with no coupling at all gets the WFE budget r.
 *
 * @param ttlBudgetPmPerNrad tau, pm/nrad
 * @param budgetRmsNm r, nm
 * @throws {RangeError} "ttlBudgetPmPerNrad must be a finite number > 0"; from {@link checkBudgetRmsNm};
 *   "the TTL budget (T pm/nrad) is not above the model's TTL at zero wavefront error (Z pm/nrad): no limits can meet it"
 */
export function requirementLimits(model: SurrogateModel, ttlBudgetPmPerNrad: number, budgetRmsNm: number): Requirements {
  if (typeof ttlBudgetPmPerNrad !== "number" || !Number.isFinite(ttlBudgetPmPerNrad) || ttlBudgetPmPerNrad <= 0) {
    throw new RangeError("ttlBudgetPmPerNrad must be a finite number > 0");
  }
  checkBudgetRmsNm(budgetRmsNm);
  const J = model.nollIndices.length;
  const P = 2 * model.pointsPerAxis * model.pointsPerAxis;
  const { count, first, second, degree } = compiledTermsOf(model);
  let zeroPeak = 0;
  const linearCoupling = new Float64Array(J);
  const crossRows = new Float64Array(J * P);
  for (let t = 0; t < count; t++) {
    const row = model.coefficients.subarray(t * P, (t + 1) * P);
    if (degree[t] === 0) for (let p = 0; p < P; p++) zeroPeak = Math.max(zeroPeak, Math.abs(row[p]));
    else if (degree[t] === 1) for (let p = 0; p < P; p++) linearCoupling[first[t]] = Math.max(linearCoupling[first[t]], Math.abs(row[p]));
    else {
      const i = first[t];
      const j = second[t];
      for (let p = 0; p < P; p++) {
        crossRows[i * P + p] += Math.abs(row[p]);
        if (j !== i) crossRows[j * P + p] += Math.abs(row[p]);
      }
    }
  }
  if (!(ttlBudgetPmPerNrad > zeroPeak)) {
    throw new RangeError(
      `the TTL budget (${ttlBudgetPmPerNrad} pm/nrad) is not above the model's TTL at zero wavefront error (${zeroPeak.toPrecision(4)} pm/nrad): no limits can meet it`,
    );
  }
  const coupling = new Float64Array(J);
  for (let i = 0; i < J; i++) {
    let cross = 0;
    for (let p = 0; p < P; p++) cross = Math.max(cross, crossRows[i * P + p]);
    coupling[i] = linearCoupling[i] + budgetRmsNm * cross;
  }
  let couplingSum = 0;
  for (let i = 0; i < J; i++) couplingSum += coupling[i];
  const room = ttlBudgetPmPerNrad - zeroPeak;
  const share = new Float64Array(J);
  // Each term's own limit for its share: the positive root of q l^2 + a l = share (a term without coupling, all its
  // coefficients zero, adds nothing anywhere and gets the WFE budget).
  const ownLimit = new Float64Array(J);
  for (let i = 0; i < J; i++) {
    if (!(coupling[i] > 0)) continue;
    share[i] = (room * coupling[i]) / couplingSum;
    const q = (coupling[i] - linearCoupling[i]) / budgetRmsNm;
    ownLimit[i] = (2 * share[i]) / (linearCoupling[i] + Math.sqrt(linearCoupling[i] ** 2 + 4 * q * share[i]));
  }
  const uncoupled = Array.from(coupling, (g) => !(g > 0));
  return {
    ttlBudgetPmPerNrad,
    budgetRmsNm,
    uniform: limitsFor(model, new Float64Array(J).fill(1), ttlBudgetPmPerNrad, budgetRmsNm),
    perTerm: { ...limitsFor(model, ownLimit, ttlBudgetPmPerNrad, budgetRmsNm, uncoupled), couplingPmPerNradPerNm: coupling, sharePmPerNrad: share },
    zeroWfePeakPmPerNrad: zeroPeak,
  };
}

/** Samples per seeded chunk of a Monte Carlo run (the samples do not depend on how a run is shared out). */
export const MONTE_CARLO_CHUNK = 1024;

/**
 * The `count` Monte Carlo wavefronts of chunk `chunk` inside the limits: even samples uniform in the box
 * `|a_i| <= L_i`, odd samples at a random vertex of the box (every `|a_i| = L_i`, random signs: where a linear part
 * dominates, its extremes lie there); a sample outside the WFE ball `||a|| <= r` is scaled onto it (which keeps it
 * inside the limits). Seeded by `seed * 2^20 + chunk` (SplitMix64), so any worker regenerates the same samples.
 *
 * @returns row-major `count x J`, nm
 * @throws {RangeError} "seed must be an integer in [0, 2^31)"; "chunk must be an integer in [0, 2^20)"
 */
export function monteCarloSamples(limitsNm: ArrayLike<number>, budgetRmsNm: number, seed: number, chunk: number, count = MONTE_CARLO_CHUNK): Float64Array {
  if (!Number.isInteger(seed) || seed < 0 || seed >= 2 ** 31) throw new RangeError("seed must be an integer in [0, 2^31)");
  if (!Number.isInteger(chunk) || chunk < 0 || chunk >= 2 ** 20) throw new RangeError("chunk must be an integer in [0, 2^20)");
  const J = limitsNm.length;
  const random = new SplitMix64(seed * 2 ** 20 + chunk);
  const out = new Float64Array(count * J);
  for (let s = 0; s < count; s++) {
    let norm2 = 0;
    const vertex = s % 2 === 1;
    for (let i = 0; i < J; i++) {
      const u = random.nextDouble();
      const value = vertex ? (u < 0.5 ? -limitsNm[i] : limitsNm[i]) : (2 * u - 1) * limitsNm[i];
      out[s * J + i] = value;
      norm2 += value * value;
    }
    if (norm2 > budgetRmsNm * budgetRmsNm) {
      const factor = budgetRmsNm / Math.sqrt(norm2);
      for (let i = 0; i < J; i++) out[s * J + i] *= factor;
    }
  }
  return out;
}

/** What a share of a Monte Carlo run found; shares merge with {@link mergeMonteCarlo}. */
export interface MonteCarloSummary {
  samples: number;
  worstPmPerNrad: number;
  /** Counts per bin of the per-wavefront peak, bins of width `binWidth` from 0; the last bin takes everything above. */
  histogram: number[];
  binWidthPmPerNrad: number;
  /** The worst samples, largest peak first: coefficients (model Noll order, nm) and the model's peak |TTL|. */
  worst: { coefficientsNm: number[]; peakPmPerNrad: number }[];
}

/** Bins of the peak histogram: 40 over [0, 1.25 tau], plus one for anything above. */
export const MONTE_CARLO_BINS = 41;

/** An empty summary whose histogram spans [0, 1.25 tau]. */
export function emptyMonteCarlo(ttlBudgetPmPerNrad: number): MonteCarloSummary {
  return { samples: 0, worstPmPerNrad: 0, histogram: new Array(MONTE_CARLO_BINS).fill(0), binWidthPmPerNrad: (1.25 * ttlBudgetPmPerNrad) / (MONTE_CARLO_BINS - 1), worst: [] };
}

/** Add the peaks of `count` samples (row-major `count x J`) to a summary, keeping the `keep` worst. */
export function addMonteCarloPeaks(summary: MonteCarloSummary, samples: Float64Array, peaks: ArrayLike<number>, J: number, keep = 100): void {
  const floor = () => (summary.worst.length < keep ? -1 : summary.worst[summary.worst.length - 1].peakPmPerNrad);
  for (let s = 0; s < peaks.length; s++) {
    const peak = peaks[s];
    summary.samples++;
    if (peak > summary.worstPmPerNrad) summary.worstPmPerNrad = peak;
    summary.histogram[Math.min(MONTE_CARLO_BINS - 1, Math.floor(peak / summary.binWidthPmPerNrad))]++;
    if (peak > floor()) {
      summary.worst.push({ coefficientsNm: Array.from(samples.subarray(s * J, (s + 1) * J)), peakPmPerNrad: peak });
      summary.worst.sort((a, b) => b.peakPmPerNrad - a.peakPmPerNrad);
      if (summary.worst.length > keep) summary.worst.length = keep;
    }
  }
}

/** Merge shares of one run (same budget, so the same bins). */
export function mergeMonteCarlo(parts: readonly MonteCarloSummary[], keep = 100): MonteCarloSummary {
  const merged: MonteCarloSummary = { ...parts[0], histogram: parts[0].histogram.slice(), worst: [...parts[0].worst] };
  for (const part of parts.slice(1)) {
    merged.samples += part.samples;
    merged.worstPmPerNrad = Math.max(merged.worstPmPerNrad, part.worstPmPerNrad);
    part.histogram.forEach((n, k) => (merged.histogram[k] += n));
    merged.worst.push(...part.worst);
  }
  merged.worst.sort((a, b) => b.peakPmPerNrad - a.peakPmPerNrad);
  merged.worst.length = Math.min(merged.worst.length, keep);
  return merged;
}
