import { sampleRmsNm, type SampleSet } from "./designs.ts";
import { evaluateBatch } from "./evaluate.ts";
import type { SurrogateModel } from "./model.ts";
import { coefficientsSha256 } from "./modelFile.ts";
import { residualStatistics } from "./statistics.ts";
import { termLabel, type Term } from "./terms.ts";
import { simpleBoundMaps } from "./worstCase.ts";

export interface SignificanceOptions {
  /** WFE budget: total RMS r of the wavefronts the model will see, nm. */
  budgetRmsNm: number;
  /** Pointing jitter amplitude, nrad. */
  jitterNrad: number;
}

export interface TermSignificance {
  term: Term;
  label: string;
  degree: number;
  /** max over nodes and axes of |C_t|, pm/nrad per nm^degree. */
  maxAbsCoefficient: number;
  /** Largest TTL the term can add within the budget: max|C_t| r^degree, pm/nrad. */
  ttlBoundPmPerNrad: number;
  /** That TTL times the jitter: largest length noise the term can add, pm. */
  noiseBoundPm: number;
}

function checkOptions({ budgetRmsNm, jitterNrad }: SignificanceOptions): void {
  if (!Number.isFinite(budgetRmsNm) || budgetRmsNm <= 0) throw new RangeError("budgetRmsNm must be a finite number > 0");
  if (!Number.isFinite(jitterNrad) || jitterNrad <= 0) throw new RangeError("jitterNrad must be a finite number > 0");
}

/**
 * Significance of every term for a WFE budget and a jitter: since each |a_i| <= r inside the budget, a term of
 * degree k adds at most `max_theta |C_t(theta)| r^k` of TTL anywhere on the map (both axes), and at most that times
 * the jitter of length noise (`ds = c dtheta`). Ranked from the largest down.
 *
 * @throws {RangeError} "budgetRmsNm must be a finite number > 0" / "jitterNrad must be a finite number > 0"
 * Source: bound derived here from |a_i a_j| <= r^2 for sum a^2 <= r^2; PHYSICS.md section 3 for ds = c dtheta.
 */
export function termSignificance(model: SurrogateModel, options: SignificanceOptions): TermSignificance[] {
  checkOptions(options);
  const P = 2 * model.pointsPerAxis * model.pointsPerAxis;
  const ranked = model.terms.map((term, t) => {
    let max = 0;
    const row = t * P;
    for (let p = 0; p < P; p++) max = Math.max(max, Math.abs(model.coefficients[row + p]));
    const ttl = max * options.budgetRmsNm ** term.length;
    return {
      term,
      label: termLabel(term),
      degree: term.length,
      maxAbsCoefficient: max,
      ttlBoundPmPerNrad: ttl,
      noiseBoundPm: ttl * options.jitterNrad,
    };
  });
  return ranked.sort((a, b) => b.noiseBoundPm - a.noiseBoundPm);
}

export interface PruneOptions extends SignificanceOptions {
  /** Keep the terms whose noise bound is at least this, pm; the constant term is always kept. */
  thresholdPm: number;
}

export interface PruneResult {
  model: SurrogateModel;
  kept: TermSignificance[];
  dropped: TermSignificance[];
}

/**
 * A pruned model: the parent's coefficients for the terms whose noise bound reaches the threshold (the
 * constant term always stays). Because the kept coefficients are unchanged, the parent minus the pruned model is
 * the polynomial of the dropped terms alone, `A_d.a + a^T B_d a` (A and B restricted to them), and at every node and
 * axis its size within the WFE budget obeys the simple bound `||A_d|| r + |lambda|_max(B_d) r^2` (PHYSICS.md
 * section 6); `pruning.droppedTtlBoundPmPerNrad` is the largest over nodes and axes, and the noise bound is the
 * jitter times the largest `sqrt(bound_x^2 + bound_y^2)` over nodes (`ds = c_x dtheta_x + c_y dtheta_y`, each axis
 * jittering by the given amount). With a validation set the bound is checked: the largest |pruned - parent| over its
 * wavefronts (each scaled into the budget when outside it) is recorded, and the pruned model's residual statistics
 * against the exact maps replace the parent's.
 *
 * @throws {RangeError} "thresholdPm must be a finite number >= 0" and those of {@link termSignificance}
 */
export function pruneModel(model: SurrogateModel, options: PruneOptions, validation?: SampleSet): PruneResult {
  if (!Number.isFinite(options.thresholdPm) || options.thresholdPm < 0) {
    throw new RangeError("thresholdPm must be a finite number >= 0");
  }
  const ranking = termSignificance(model, options);
  const keep = new Set<string>();
  for (const entry of ranking) if (entry.degree === 0 || entry.noiseBoundPm >= options.thresholdPm) keep.add(entry.label);
  const kept = ranking.filter((e) => keep.has(e.label));
  const dropped = ranking.filter((e) => !keep.has(e.label));
  const P = 2 * model.pointsPerAxis * model.pointsPerAxis;
  const keptIndices = model.terms.map((term, t) => [term, t] as const).filter(([term]) => keep.has(termLabel(term)));
  const coefficients = new Float64Array(keptIndices.length * P);
  keptIndices.forEach(([, t], k) => coefficients.set(model.coefficients.subarray(t * P, (t + 1) * P), k * P));
  const droppedMask = model.terms.map((term) => !keep.has(termLabel(term)));
  const { ttl: droppedTtl, noise: droppedNoise } = droppedBound(model, droppedMask, options);
  const pruned: SurrogateModel = {
    ...model,
    terms: keptIndices.map(([term]) => [...term]),
    coefficients,
    statistics: model.statistics,
    pruning: {
      parentTermCount: model.terms.length,
      parentCoefficientsSha256: coefficientsSha256(model),
      budgetRmsNm: options.budgetRmsNm,
      jitterNrad: options.jitterNrad,
      thresholdPm: options.thresholdPm,
      droppedTtlBoundPmPerNrad: droppedTtl,
      droppedNoiseBoundPm: droppedNoise,
      droppedTtlSeenPmPerNrad: null,
    },
  };
  if (validation) {
    const J = model.nollIndices.length;
    // The bound holds for any wavefront within the budget: check it on the validation wavefronts, each scaled
    // into the budget when it lies outside (same direction in coefficient space, total RMS r).
    const rms = sampleRmsNm(validation.coefficientsNm, J);
    const inBudget = validation.coefficientsNm.slice();
    for (let s = 0; s < validation.count; s++) {
      const factor = rms[s] > options.budgetRmsNm ? options.budgetRmsNm / rms[s] : 1;
      for (let k = 0; k < J; k++) inBudget[s * J + k] *= factor;
    }
    const full = evaluateBatch(model, inBudget);
    const reduced = evaluateBatch(pruned, inBudget);
    let seen = 0;
    for (let p = 0; p < full.length; p++) seen = Math.max(seen, Math.abs(full[p] - reduced[p]));
    pruned.pruning!.droppedTtlSeenPmPerNrad = seen;
    pruned.statistics = residualStatistics(validation, J, splitAxes(evaluateBatch(pruned, validation.coefficientsNm), validation.count, P / 2));
  }
  return { model: pruned, kept, dropped };
}

/**
 * The per-node simple bound of the terms where `mask[t]`: largest over nodes and axes (pm/nrad), and the jitter times
 * the largest `sqrt(bound_x^2 + bound_y^2)` over nodes (pm).
 */
export function droppedBound(model: SurrogateModel, mask: readonly boolean[], options: SignificanceOptions): { ttl: number; noise: number } {
  if (!mask.some(Boolean)) return { ttl: 0, noise: 0 };
  const bound = simpleBoundMaps(model, options.budgetRmsNm, mask);
  const nodes = model.pointsPerAxis * model.pointsPerAxis;
  let ttl = 0;
  let noise = 0;
  for (let n = 0; n < nodes; n++) {
    ttl = Math.max(ttl, bound[n], bound[nodes + n]);
    noise = Math.max(noise, Math.hypot(bound[n], bound[nodes + n]));
  }
  return { ttl, noise: noise * options.jitterNrad };
}

/** Split row-major `S x [x map, y map]` outputs into the flat per-axis layout of a sample set. */
export function splitAxes(outputs: Float64Array, count: number, nodes: number): { x: Float64Array; y: Float64Array } {
  const x = new Float64Array(count * nodes);
  const y = new Float64Array(count * nodes);
  for (let s = 0; s < count; s++) {
    x.set(outputs.subarray(2 * s * nodes, (2 * s + 1) * nodes), s * nodes);
    y.set(outputs.subarray((2 * s + 1) * nodes, (2 * s + 2) * nodes), s * nodes);
  }
  return { x, y };
}
