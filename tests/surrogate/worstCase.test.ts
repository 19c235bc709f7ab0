import { describe, expect, it } from "vitest";
import {
  evaluateBatch, firstOrderTerms, maximiseAbsQuadraticOnBall, randomDesign, secondOrderTerms, simpleBoundMaps, worstCase, type Term,
} from "../../lib/surrogate/index.ts";
import { chosenCoefficients, smallSetup, syntheticModel } from "./helpers.ts";

const M = smallSetup.farField.pointsPerAxis;
const P = 2 * M * M;

/** c_p(a) straight from the definition `sum_t C_t prod a` (PHYSICS.md section 5), independent of the product's code. */
function direct(terms: readonly Term[], noll: number[], coefficients: Float64Array, p: number, a: ArrayLike<number>): number {
  let value = 0;
  terms.forEach((term, t) => {
    value += coefficients[t * P + p] * term.reduce((product, j) => product * a[noll.indexOf(j)], 1);
  });
  return value;
}

function modelOf(noll: number[], order: 1 | 2, scale = 0.01) {
  const terms = order === 1 ? firstOrderTerms(noll) : secondOrderTerms(noll);
  const coefficients = chosenCoefficients(terms.length * P, scale);
  return { terms, coefficients, model: syntheticModel(terms, noll, coefficients, randomDesign(noll.length, { size: 60, maxRmsNm: 40, seed: 5 }), order) };
}

describe("worstCase", () => {
  it("equals |c0| + ||A|| r on a model without B (Cauchy-Schwarz), node by node", () => {
    const noll = [4, 5, 6, 7, 8];
    const { model, coefficients } = modelOf(noll, 1);
    const r = 12;
    const result = worstCase(model, r);
    for (let p = 0; p < P; p++) {
      let a2 = 0;
      for (let i = 1; i <= noll.length; i++) a2 += coefficients[i * P + p] ** 2;
      const expected = Math.abs(coefficients[p]) + Math.sqrt(a2) * r;
      expect(Math.abs(result.exact[p] - expected)).toBeLessThan(1e-14 * expected);
      // Without B the simple bound is the same number.
      expect(Math.abs(result.bound[p] - expected)).toBeLessThan(1e-14 * expected);
    }
  });

  it("agrees with a dense brute-force search over the disc (J = 2) and the ball (J = 3)", () => {
    // Reference: direct evaluation of the polynomial on a polar grid of the disc (2000 angles x 100 radii) and on a
    // Fibonacci lattice of the sphere (20,000 points, 40 radii), common practice for checking a global maximum.
    // The search can only find values up to the true maximum; its resolution (about 3e-3 rad on the circle and
    // 0.025 rad on the sphere, 1 % in radius) bounds how far below it stays.
    for (const noll of [[4, 5], [4, 5, 6]]) {
      const { model, terms, coefficients } = modelOf(noll, 2, 0.02);
      const r = 7;
      const result = worstCase(model, r);
      for (const p of [0, 7, 13, 31, P - 1]) {
        let best = 0;
        const a = new Float64Array(noll.length);
        const visit = () => {
          best = Math.max(best, Math.abs(direct(terms, noll, coefficients, p, a)));
        };
        if (noll.length === 2) {
          for (let k = 0; k < 2000; k++) for (let s = 1; s <= 100; s++) {
            const phi = (2 * Math.PI * k) / 2000;
            a[0] = ((r * s) / 100) * Math.cos(phi);
            a[1] = ((r * s) / 100) * Math.sin(phi);
            visit();
          }
        } else {
          const N = 20000;
          for (let k = 0; k < N; k++) {
            const z = 1 - (2 * (k + 0.5)) / N;
            const phi = Math.PI * (3 - Math.sqrt(5)) * k;
            const rho = Math.sqrt(1 - z * z);
            for (let s = 1; s <= 40; s++) {
              const radius = (r * s) / 40;
              a[0] = radius * rho * Math.cos(phi);
              a[1] = radius * rho * Math.sin(phi);
              a[2] = radius * z;
              visit();
            }
          }
        }
        expect(best).toBeLessThanOrEqual(result.exact[p] * (1 + 1e-12));
        expect(result.exact[p] - best).toBeLessThan(2e-3 * result.exact[p]);
        expect(result.exact[p]).toBeLessThanOrEqual(result.bound[p] * (1 + 1e-12));
      }
    }
  });

  it("is never below the TTL of 10,000 sampled wavefronts inside the budget, never above the simple bound, and its wavefront reaches it", () => {
    const noll = Array.from({ length: 33 }, (_, i) => i + 4);
    const { model, terms, coefficients } = modelOf(noll, 2, 0.001);
    const r = 30;
    const result = worstCase(model, r);
    // 5,000 uniform in the ball and 5,000 on its surface (where a maximum with a dominant linear part lies).
    const inside = randomDesign(33, { size: 5000, maxRmsNm: r, seed: 11 });
    const surface = randomDesign(33, { size: 5000, maxRmsNm: r, seed: 12 });
    for (let s = 0; s < 5000; s++) {
      const row = surface.subarray(s * 33, (s + 1) * 33);
      const norm = Math.hypot(...row);
      for (let i = 0; i < 33; i++) row[i] *= r / norm;
    }
    let above = 0;
    let closest = Infinity;
    for (const set of [inside, surface]) {
      const maps = evaluateBatch(model, set);
      for (let s = 0; s < 5000; s++) for (let p = 0; p < P; p++) {
        if (Math.abs(maps[s * P + p]) > result.exact[p] * (1 + 1e-12)) above++;
        closest = Math.min(closest, result.exact[p] - Math.abs(maps[s * P + p]));
      }
    }
    expect(above).toBe(0);
    expect(closest).toBeGreaterThanOrEqual(-1e-12);
    for (let p = 0; p < P; p++) expect(result.exact[p]).toBeLessThanOrEqual(result.bound[p] * (1 + 1e-12));
    // The maximiser: total RMS r to 1e-9 and the reported value on the model (direct sum; float64 model).
    expect(Math.abs(Math.hypot(...result.worstCoefficientsNm) - r)).toBeLessThan(1e-9);
    const reached = direct(terms, noll, coefficients, result.worstOutput, result.worstCoefficientsNm);
    expect(Math.abs(reached - result.worstSign * result.worstValue)).toBeLessThan(1e-12 * result.worstValue);
    expect(result.worstValue).toBe(Math.max(...result.exact));
  });

  it("solves a constructed hard case: the linear part has no component along the top eigenvector", () => {
    // S = R diag(3, 1, -2) R^T, g = R (0, 1, 0.5), r = 1, R a rotation by 0.4 rad about z then 0.9 rad about x.
    // Hard case (More and Sorensen 1983, section 5): nu = 3, x_2 = 1 / (2 (3 - 1)) = 0.25, x_3 = 0.5 / (2 (3 + 2)) = 0.05,
    // x_1 = sqrt(1 - 0.25^2 - 0.05^2), so max f = 0.25 + 0.025 + 3 (0.935) + 0.0625 - 2 (0.0025) = 3.1375.
    // The other sign is at most ||g|| + 2 = 3.118 < 3.1375, so max |c| = 3.1375.
    const [a, b] = [0.4, 0.9];
    const Rz = [[Math.cos(a), -Math.sin(a), 0], [Math.sin(a), Math.cos(a), 0], [0, 0, 1]];
    const Rx = [[1, 0, 0], [0, Math.cos(b), -Math.sin(b)], [0, Math.sin(b), Math.cos(b)]];
    const R = Rx.map((row) => [0, 1, 2].map((j) => row.reduce((s, v, k) => s + v * Rz[k][j], 0)));
    const d = [3, 1, -2];
    const S = new Float64Array(9);
    for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) for (let k = 0; k < 3; k++) S[i * 3 + j] += R[i][k] * d[k] * R[j][k];
    const g = [0, 1, 2].map((i) => R[i][1] * 1 + R[i][2] * 0.5);
    const result = maximiseAbsQuadraticOnBall(0, g, S, 1);
    expect(result.kind).toBe("hard");
    expect(Math.abs(result.value - 3.1375)).toBeLessThan(1e-12);
    expect(Math.abs(Math.hypot(...result.coefficientsNm) - 1)).toBeLessThan(1e-12);
    let f = 0;
    for (let i = 0; i < 3; i++) {
      f += g[i] * result.coefficientsNm[i];
      for (let j = 0; j < 3; j++) f += result.coefficientsNm[i] * S[i * 3 + j] * result.coefficientsNm[j];
    }
    expect(Math.abs(f - 3.1375)).toBeLessThan(1e-12);
  });

  it("finds an interior maximum of a concave part and refuses a bad budget", () => {
    // f = 1 + 2 a - a^2 (J = 1): stationary at a = 1 inside r = 5, value 2; the other sign, -1 - 2a + a^2, peaks at
    // a = -5 with 34 (closed form), so max |c| = 34.
    const result = maximiseAbsQuadraticOnBall(1, [2], [-1], 5);
    expect(result.value).toBeCloseTo(34, 12);
    expect(result.coefficientsNm[0]).toBeCloseTo(-5, 12);
    const concave = maximiseAbsQuadraticOnBall(-10, [2], [-1], 5);
    // -(-10 + 2a - a^2) = 10 - 2a + a^2 peaks at a = -5: 45; +c peaks at a = 1: -9. max |c| = 45.
    expect(concave.value).toBeCloseTo(45, 12);
    const { model } = modelOf([4, 5], 2);
    expect(() => worstCase(model, 0)).toThrow(new RangeError("budgetRmsNm must be a finite number > 0"));
    expect(() => simpleBoundMaps(model, Number.NaN)).toThrow(new RangeError("budgetRmsNm must be a finite number > 0"));
  });
});
