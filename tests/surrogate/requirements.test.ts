import { describe, expect, it } from "vitest";
import {
  addMonteCarloPeaks, emptyMonteCarlo, evaluateBatch, firstOrderTerms, mergeMonteCarlo, monteCarloSamples, randomDesign, requirementLimits,
  secondOrderTerms,
} from "../../lib/surrogate/index.ts";
import { evaluateBatchPeaksInto } from "../../lib/surrogate/evaluate.ts";
import { chosenCoefficients, smallSetup, syntheticModel } from "./helpers.ts";

const M = smallSetup.farField.pointsPerAxis;
const P = 2 * M * M;

describe("requirementLimits", () => {
  it("gives L = min_p (tau - |c0_p|) / |A_p| for one linear term (closed form)", () => {
    const coefficients = new Float64Array(2 * P);
    for (let p = 0; p < P; p++) {
      coefficients[p] = 0.001 * Math.sin(p);
      coefficients[P + p] = 0.01 * (1 + Math.cos(0.4 * p));
    }
    const model = syntheticModel(firstOrderTerms([4]), [4], coefficients, randomDesign(1, { size: 5, maxRmsNm: 30, seed: 1 }), 1);
    const tau = 0.1;
    let expected = Infinity;
    for (let p = 0; p < P; p++) expected = Math.min(expected, (tau - Math.abs(coefficients[p])) / Math.abs(coefficients[P + p]));
    const limits = requirementLimits(model, tau, 1000);
    expect(limits.uniform.linearNm[0]).toBeCloseTo(expected, 9);
    expect(limits.perTerm.linearNm[0]).toBeCloseTo(expected, 9);
    // Capped by the WFE budget.
    expect(requirementLimits(model, tau, 2).uniform.linearNm[0]).toBe(2);
  });

  it("solves b L^2 + A L = tau for one term with a square part (closed form root)", () => {
    const terms = secondOrderTerms([4]); // [], [4], [4, 4]
    const coefficients = new Float64Array(3 * P);
    for (let p = 0; p < P; p++) {
      coefficients[P + p] = 0.004;
      coefficients[2 * P + p] = p === 3 ? -0.0003 : 0.0001;
    }
    const model = syntheticModel(terms, [4], coefficients, randomDesign(1, { size: 5, maxRmsNm: 30, seed: 1 }));
    const limits = requirementLimits(model, 0.1, 100);
    // Worst output: |b| = 0.0003: L = (-0.004 + sqrt(0.004^2 + 4 * 0.0003 * 0.1)) / (2 * 0.0003).
    expect(limits.uniform.linearNm[0]).toBeCloseTo((-0.004 + Math.sqrt(0.004 ** 2 + 4 * 0.0003 * 0.1)) / 0.0006, 9);
    expect(limits.uniform.crossNm2[0]).toBeCloseTo(limits.uniform.linearNm[0] ** 2, 12);
  });

  it("shares the TTL budget in proportion to each term's coupling: on a linear model every term gets the same limit", () => {
    // Three linear terms with maps A_i(p) = alpha_i (constant over the map), c0 = 0. Coupling g_i = alpha_i, share
    // tau_i = tau alpha_i / sum alpha, own limit l_i = tau_i / alpha_i = tau / sum alpha for every term (derived
    // here); the bound sum_i alpha_i l_i = tau is met exactly, so the common scale is 1.
    const alpha = [0.001, 0.003, 0.006];
    const coefficients = new Float64Array(4 * P);
    alpha.forEach((a, i) => coefficients.fill(a, (i + 1) * P, (i + 2) * P));
    const model = syntheticModel(firstOrderTerms([4, 5, 6]), [4, 5, 6], coefficients, randomDesign(3, { size: 8, maxRmsNm: 30, seed: 1 }), 1);
    const tau = 0.1;
    const { perTerm, uniform } = requirementLimits(model, tau, 1000);
    const sum = alpha.reduce((s, a) => s + a, 0);
    alpha.forEach((a, i) => {
      expect(perTerm.couplingPmPerNradPerNm[i]).toBeCloseTo(a, 15);
      expect(perTerm.sharePmPerNrad[i]).toBeCloseTo((tau * a) / sum, 14);
      // 1e-9 nm: the limits sit a relative 1e-12 inside the root (rounding guard of the code).
      expect(perTerm.linearNm[i]).toBeCloseTo(tau / sum, 9);
      expect(perTerm.linearNm[i]).toBeCloseTo(uniform.linearNm[i], 9);
    });
    expect(perTerm.boundPmPerNrad).toBeLessThanOrEqual(tau);
  });

  it("shares the budget by coupling with a square term: a l + q l^2 = share (closed form), and the bound holds", () => {
    // Term 4 linear, A_4 = a; term 5 purely square, b_55 = q (A_5 = 0, no product), both constant over the map,
    // c0 = 0, WFE budget r. Couplings g_4 = a, g_5 = r q; shares tau_4 = tau a / (a + r q), tau_5 = tau r q / (a + r q);
    // own limits l_4 = tau_4 / a = tau / (a + r q) and l_5 = sqrt(tau_5 / q) = sqrt(tau r / (a + r q)); the bound
    // a l_4 + q l_5^2 = tau_4 + tau_5 = tau is met exactly, so the common scale is 1 (derived here).
    const a = 0.004;
    const q = 0.0001;
    const r = 30;
    const tau = 0.1;
    const terms = secondOrderTerms([4, 5]); // [], [4], [5], [4, 4], [4, 5], [5, 5]
    const coefficients = new Float64Array(6 * P);
    coefficients.fill(a, P, 2 * P);
    coefficients.fill(q, 5 * P, 6 * P);
    const model = syntheticModel(terms, [4, 5], coefficients, randomDesign(2, { size: 8, maxRmsNm: 30, seed: 1 }));
    const { perTerm } = requirementLimits(model, tau, r);
    expect(perTerm.couplingPmPerNradPerNm[0]).toBeCloseTo(a, 15);
    expect(perTerm.couplingPmPerNradPerNm[1]).toBeCloseTo(r * q, 15);
    expect(perTerm.sharePmPerNrad[0]).toBeCloseTo((tau * a) / (a + r * q), 14);
    expect(perTerm.sharePmPerNrad[1]).toBeCloseTo((tau * r * q) / (a + r * q), 14);
    expect(perTerm.linearNm[0]).toBeCloseTo(tau / (a + r * q), 9);
    expect(perTerm.linearNm[1]).toBeCloseTo(Math.sqrt((tau * r) / (a + r * q)), 9);
    expect(perTerm.boundPmPerNrad).toBeLessThanOrEqual(tau);
    expect(perTerm.boundPmPerNrad).toBeCloseTo(tau, 10);
    // A Monte Carlo inside the limits never exceeds the budget on the model (half its samples at the box's vertices,
    // where this model reaches tau).
    const samples = monteCarloSamples(perTerm.linearNm, r, 3, 0);
    const peaks = new Float64Array(samples.length / 2);
    evaluateBatchPeaksInto(model, samples, peaks);
    expect(Math.max(...peaks)).toBeLessThanOrEqual(tau);
  });

  it("holds under a Monte Carlo of 2 x 20,480 wavefronts inside the limits, and is reached at a vertex on a linear model", () => {
    const noll = [4, 5, 6, 7, 8, 9, 10, 11];
    const terms = secondOrderTerms(noll);
    const model = syntheticModel(terms, noll, chosenCoefficients(terms.length * P, 0.002), randomDesign(8, { size: 60, maxRmsNm: 30, seed: 2 }));
    const tau = 0.1;
    const requirements = requirementLimits(model, tau, 30);
    for (const limits of [requirements.uniform, requirements.perTerm]) {
      expect(limits.boundPmPerNrad).toBeLessThanOrEqual(tau);
      // The bound recomputed here from the maps (triangle inequality over the terms, PHYSICS.md section 6):
      // max_p |c0_p| + sum_i |A_i(p)| L_i + sum_{i<=j} |b_ij(p)| L_i L_j, at most the budget.
      let bound = 0;
      for (let p = 0; p < P; p++) {
        let sum = 0;
        terms.forEach((term, t) => {
          const factor = term.reduce((f, j) => f * limits.linearNm[noll.indexOf(j)], 1);
          sum += Math.abs(model.coefficients[t * P + p]) * factor;
        });
        bound = Math.max(bound, sum);
      }
      expect(bound).toBeLessThanOrEqual(tau * (1 + 1e-12));
      expect(bound).toBeCloseTo(limits.boundPmPerNrad, 12);
      const summary = emptyMonteCarlo(tau);
      for (let chunk = 0; chunk < 20; chunk++) {
        const samples = monteCarloSamples(limits.linearNm, 30, 4, chunk);
        let outside = 0;
        for (let s = 0; s < samples.length / 8; s++) {
          for (let i = 0; i < 8; i++) if (Math.abs(samples[s * 8 + i]) > limits.linearNm[i] * (1 + 1e-15)) outside++;
        }
        expect(outside).toBe(0);
        const peaks = new Float64Array(samples.length / 8);
        evaluateBatchPeaksInto(model, samples, peaks);
        addMonteCarloPeaks(summary, samples, peaks, 8);
      }
      expect(summary.samples).toBe(20 * 1024);
      expect(summary.worstPmPerNrad).toBeLessThanOrEqual(tau);
      expect(summary.worst).toHaveLength(100);
      expect(summary.worst[0].peakPmPerNrad).toBe(summary.worstPmPerNrad);
      expect(summary.histogram.reduce((s, n) => s + n, 0)).toBe(summary.samples);
    }
    // Linear model: the bound sum_i |A_i(p)| L is met with equality by a = L sign(A(p)) at the worst output
    // (triangle inequality with equality), so the limit is tight there.
    const linearTerms = firstOrderTerms(noll);
    const linearCoefficients = chosenCoefficients(linearTerms.length * P, 0.002);
    for (let p = 0; p < P; p++) linearCoefficients[p] = 0;
    const linear = syntheticModel(linearTerms, noll, linearCoefficients, randomDesign(8, { size: 60, maxRmsNm: 30, seed: 2 }), 1);
    const { uniform } = requirementLimits(linear, tau, 1000);
    let best = 0;
    for (let p = 0; p < P; p++) {
      const a = noll.map((_, i) => uniform.linearNm[i] * Math.sign(linearCoefficients[(i + 1) * P + p]));
      best = Math.max(best, Math.abs(evaluateBatch(linear, a)[p]));
    }
    expect(best).toBeCloseTo(tau, 9);
  });

  it("merges shares of a run and refuses a budget the model cannot meet", () => {
    const a = emptyMonteCarlo(1);
    const b = emptyMonteCarlo(1);
    addMonteCarloPeaks(a, Float64Array.from([1, 2]), [0.5, 2], 1, 1);
    addMonteCarloPeaks(b, Float64Array.from([3]), [0.7], 1, 1);
    const merged = mergeMonteCarlo([a, b], 2);
    expect(merged.samples).toBe(3);
    expect(merged.worstPmPerNrad).toBe(2);
    expect(merged.worst.map((w) => w.coefficientsNm[0])).toEqual([2, 3]);
    expect(merged.histogram[merged.histogram.length - 1]).toBe(1); // 2 > 1.25 tau goes to the last bin
    const coefficients = new Float64Array(2 * P).fill(0.2);
    const model = syntheticModel(firstOrderTerms([4]), [4], coefficients, randomDesign(1, { size: 5, maxRmsNm: 30, seed: 1 }), 1);
    expect(() => requirementLimits(model, 0.1, 30)).toThrow(
      new RangeError("the TTL budget (0.1 pm/nrad) is not above the model's TTL at zero wavefront error (0.2000 pm/nrad): no limits can meet it"),
    );
    expect(() => requirementLimits(model, 0, 30)).toThrow(new RangeError("ttlBudgetPmPerNrad must be a finite number > 0"));
    expect(() => monteCarloSamples([1], 30, -1, 0)).toThrow(new RangeError("seed must be an integer in [0, 2^31)"));
  });
});
