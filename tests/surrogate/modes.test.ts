import { describe, expect, it } from "vitest";
import { couplingModes, firstOrderTerms, projectOntoModes, randomDesign } from "../../lib/surrogate/index.ts";
import reference from "../fixtures/analysis/analysis.json";
import { smallSetup, syntheticModel } from "./helpers.ts";

const M = smallSetup.farField.pointsPerAxis;
const P = 2 * M * M; // 50 outputs
const noll = [4, 5, 6, 7];
const J = noll.length;

/** A linear model whose stacked maps are the given P x J matrix (row-major), c0 = 0. */
function linearModel(L: Float64Array) {
  const coefficients = new Float64Array((J + 1) * P);
  for (let p = 0; p < P; p++) for (let i = 0; i < J; i++) coefficients[(i + 1) * P + p] = L[p * J + i];
  return syntheticModel(firstOrderTerms(noll), noll, coefficients, randomDesign(J, { size: 20, maxRmsNm: 10, seed: 1 }), 1);
}

// L = U Sigma V^T with known factors: U the first J DCT-II basis vectors over P points (orthonormal: G. Strang,
// "The discrete cosine transform", SIAM Review 41, 135-147 (1999)), V the Householder reflection I - 2 v v^T / v.v
// with v = (1, 2, 3, 4) (orthogonal and symmetric: Golub and Van Loan, section 5.1.2), Sigma = (5, 2, 0.5, 0.01).
const sigma = [5, 2, 0.5, 0.01];
const U = (p: number, k: number) => (k === 0 ? 1 / Math.sqrt(P) : Math.sqrt(2 / P) * Math.cos((Math.PI * (p + 0.5) * k) / P));
const h = [1, 2, 3, 4];
const hh = h.reduce((s, v) => s + v * v, 0);
const V = (i: number, k: number) => (i === k ? 1 : 0) - (2 * h[i] * h[k]) / hh;
const L = new Float64Array(P * J);
for (let p = 0; p < P; p++) for (let i = 0; i < J; i++) for (let k = 0; k < J; k++) L[p * J + i] += U(p, k) * sigma[k] * V(i, k);

describe("couplingModes", () => {
  it("recovers the singular values and right singular vectors of a matrix built from known factors", () => {
    const modes = couplingModes(linearModel(L));
    modes.forEach((mode, k) => {
      expect(Math.abs(mode.singularValue - sigma[k])).toBeLessThan(1e-13 * sigma[0]);
      const sign = Math.sign(mode.coefficients.reduce((s, v, i) => s + v * V(i, k), 0));
      for (let i = 0; i < J; i++) expect(Math.abs(sign * mode.coefficients[i] - V(i, k))).toBeLessThan(1e-12);
    });
  });

  it("gives orthonormal modes that reproduce the linear maps to float precision", () => {
    // A formula matrix whose singular values NumPy computed (numpy.linalg.svd in make_analysis.py).
    const F = new Float64Array(P * J);
    for (let p = 0; p < P; p++) for (let k = 0; k < J; k++) F[p * J + k] = Math.cos(0.37 * p * (k + 1)) + 0.1 * k;
    const modes = couplingModes(linearModel(F));
    reference.tall50x4SingularValues.forEach((value, k) => expect(Math.abs(modes[k].singularValue - value)).toBeLessThan(1e-12 * value));
    for (let a = 0; a < J; a++) for (let b = 0; b < J; b++) {
      const dot = modes[a].coefficients.reduce((s, v, i) => s + v * modes[b].coefficients[i], 0);
      expect(Math.abs(dot - (a === b ? 1 : 0))).toBeLessThan(1e-14);
    }
    // L = sum_k (L v_k) v_k^T because V is orthogonal.
    let worst = 0;
    for (let p = 0; p < P; p++) for (let i = 0; i < J; i++) {
      const rebuilt = modes.reduce((s, mode) => s + mode.map[p] * mode.coefficients[i], 0);
      worst = Math.max(worst, Math.abs(rebuilt - F[p * J + i]));
    }
    expect(worst).toBeLessThan(1e-14);
  });

  it("splits a wavefront's linear TTL by mode: amplitudes v_k . a and energies sigma_k^2 alpha_k^2 / sum", () => {
    const modes = couplingModes(linearModel(L));
    // a = 2 v_0 - 3 v_2 (closed form: amplitudes 2, 0, -3, 0; energies 25 * 4 and 0.25 * 9 over their sum).
    const a = Float64Array.from({ length: J }, (_, i) => 2 * V(i, 0) - 3 * V(i, 2));
    const split = projectOntoModes(modes, a, noll);
    const signs = modes.map((mode, k) => Math.sign(mode.coefficients.reduce((s, v, i) => s + v * V(i, k), 0)));
    expect(split.amplitudesNm[0] * signs[0]).toBeCloseTo(2, 12);
    expect(split.amplitudesNm[2] * signs[2]).toBeCloseTo(-3, 12);
    expect(Math.abs(split.amplitudesNm[1]) + Math.abs(split.amplitudesNm[3])).toBeLessThan(1e-12);
    expect(split.energyFraction[0]).toBeCloseTo(100 / 102.25, 12);
    expect(split.energyFraction[2]).toBeCloseTo(2.25 / 102.25, 12);
    expect(() => projectOntoModes(modes, [1, 2], noll)).toThrow(new RangeError("expected 4 coefficients (one per term), got 2"));
  });
});
