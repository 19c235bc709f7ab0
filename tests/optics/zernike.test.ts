import { describe, expect, it } from "vitest";
import {
  MAX_ANSI_INDEX, MAX_NOLL_INDEX, ansiToNoll, nollToAnsi, nollToOrders, toNollIndices, zernike,
} from "@/lib/optics/index.ts";

// Noll 1976, J. Opt. Soc. Am. 66, 207, Table I: closed forms of the first terms (rho in [0, 1]).
const SQ3 = Math.sqrt(3), SQ5 = Math.sqrt(5), SQ6 = Math.sqrt(6), SQ7 = Math.sqrt(7), SQ8 = Math.sqrt(8), SQ10 = Math.sqrt(10);
const NOLL_TABLE_I: Record<number, (r: number, t: number) => number> = {
  1: () => 1,
  2: (r, t) => 2 * r * Math.cos(t),
  3: (r, t) => 2 * r * Math.sin(t),
  4: (r) => SQ3 * (2 * r * r - 1),
  5: (r, t) => SQ6 * r * r * Math.sin(2 * t),
  6: (r, t) => SQ6 * r * r * Math.cos(2 * t),
  7: (r, t) => SQ8 * (3 * r ** 3 - 2 * r) * Math.sin(t),
  8: (r, t) => SQ8 * (3 * r ** 3 - 2 * r) * Math.cos(t),
  9: (r, t) => SQ8 * r ** 3 * Math.sin(3 * t),
  10: (r, t) => SQ8 * r ** 3 * Math.cos(3 * t),
  11: (r) => SQ5 * (6 * r ** 4 - 6 * r * r + 1),
  12: (r, t) => SQ10 * (4 * r ** 4 - 3 * r * r) * Math.cos(2 * t),
  13: (r, t) => SQ10 * (4 * r ** 4 - 3 * r * r) * Math.sin(2 * t),
  14: (r, t) => SQ10 * r ** 4 * Math.cos(4 * t),
  15: (r, t) => SQ10 * r ** 4 * Math.sin(4 * t),
  22: (r) => SQ7 * (20 * r ** 6 - 30 * r ** 4 + 12 * r * r - 1),
};

describe("zernike", () => {
  it("matches Noll's Table I term by term", () => {
    for (const [j, formula] of Object.entries(NOLL_TABLE_I)) {
      for (const rho of [0, 0.3, 0.71, 1]) {
        for (const phi of [0, 0.4, 2.2, -1.3]) {
          // 1e-13: exact integer coefficients, only rounding in the last bits.
          expect(zernike(Number(j), rho, phi)).toBeCloseTo(formula(rho, phi), 13);
        }
      }
    }
  });

  it("is orthonormal over the unit disc for Noll 1-36 (quadrature to 1e-9)", () => {
    // <Z_i Z_j> = (1/pi) int_0^1 int_0^2pi Z_i Z_j rho drho dphi = delta_ij (Noll 1976, eq. 4 with unit-RMS
    // normalisation). The azimuthal integral of trigonometric polynomials of degree < 2*40 is exact with the
    // 40-point midpoint rule; the radial integrand is a polynomial, integrated by composite Simpson with
    // 2000 intervals (error below 1e-12 for degree <= 11).
    const terms = 36, phiPoints = 40, intervals = 2000;
    const gram = new Float64Array(terms * terms);
    const values = new Float64Array(terms);
    for (let ir = 0; ir <= intervals; ir++) {
      const rho = ir / intervals;
      const simpson = ir === 0 || ir === intervals ? 1 : ir % 2 === 1 ? 4 : 2;
      const weight = (simpson / (3 * intervals)) * rho * ((2 * Math.PI) / phiPoints) / Math.PI;
      for (let ip = 0; ip < phiPoints; ip++) {
        const phi = ((ip + 0.5) * 2 * Math.PI) / phiPoints;
        for (let j = 0; j < terms; j++) values[j] = zernike(j + 1, rho, phi);
        for (let i = 0; i < terms; i++) for (let j = 0; j < terms; j++) gram[i * terms + j] += weight * values[i] * values[j];
      }
    }
    for (let i = 0; i < terms; i++) {
      for (let j = 0; j < terms; j++) expect(Math.abs(gram[i * terms + j] - (i === j ? 1 : 0))).toBeLessThan(1e-9);
    }
  });

  it("orders Noll terms by radial order, even index on cos, odd on sin (Noll 1976)", () => {
    expect(nollToOrders(4)).toEqual({ n: 2, m: 0 });
    expect(nollToOrders(5)).toEqual({ n: 2, m: -2 });
    expect(nollToOrders(6)).toEqual({ n: 2, m: 2 });
    expect(nollToOrders(11)).toEqual({ n: 4, m: 0 });
    expect(nollToOrders(36)).toEqual({ n: 7, m: 7 });
    expect(nollToOrders(37)).toEqual({ n: 8, m: 0 });
    expect(nollToOrders(66)).toEqual({ n: 10, m: 10 });
  });
});

describe("Noll and ANSI indices", () => {
  it("converts the ANSI Z80.28 table's first indices both ways", () => {
    // ANSI/ISO single index j = (n(n + 2) + m) / 2 (ISO 24157, ANSI Z80.28), worked by hand:
    // j=0 piston (0,0); 1 (1,-1) = Noll 3; 2 (1,1) = Noll 2; 3 (2,-2) = Noll 5; 4 (2,0) = Noll 4;
    // 5 (2,2) = Noll 6; 6 (3,-3) = Noll 9; 7 (3,-1) = Noll 7; 8 (3,1) = Noll 8; 9 (3,3) = Noll 10; 12 (4,0) = Noll 11.
    const pairs: [number, number][] = [[0, 1], [1, 3], [2, 2], [3, 5], [4, 4], [5, 6], [6, 9], [7, 7], [8, 8], [9, 10], [12, 11]];
    for (const [ansi, noll] of pairs) {
      expect(ansiToNoll(ansi)).toBe(noll);
      expect(nollToAnsi(noll)).toBe(ansi);
    }
  });

  it("round-trips every supported index both ways", () => {
    for (let j = 1; j <= MAX_NOLL_INDEX; j++) expect(ansiToNoll(nollToAnsi(j))).toBe(j);
    for (let j = 0; j <= MAX_ANSI_INDEX; j++) expect(nollToAnsi(ansiToNoll(j))).toBe(j);
    expect(MAX_NOLL_INDEX).toBeGreaterThanOrEqual(66);
  });

  it("rejects invalid indices and orderings with exact messages", () => {
    expect(() => nollToOrders(0)).toThrow(new RangeError(`Noll index must be an integer from 1 to ${MAX_NOLL_INDEX}, got 0`));
    expect(() => nollToOrders(2.5)).toThrow(RangeError);
    expect(() => ansiToNoll(-1)).toThrow(new RangeError(`ANSI index must be an integer from 0 to ${MAX_ANSI_INDEX}, got -1`));
    expect(() => toNollIndices({ ordering: "fringe" as never, indices: [4] })).toThrow(
      new TypeError('Zernike ordering must be "noll" or "ansi", got "fringe"'),
    );
    expect(() => toNollIndices({ ordering: "noll", indices: [] })).toThrow("Zernike set must list at least one term");
    expect(() => toNollIndices({ ordering: "ansi", indices: [4, 4] })).toThrow("Zernike set lists Noll term 4 more than once");
    expect(toNollIndices({ ordering: "ansi", indices: [3, 4, 5] })).toEqual([5, 4, 6]);
  });
});
