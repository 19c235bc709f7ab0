import { describe, expect, it } from "vitest";
import {
  apertureTransmission, pupilCoordinates, ttlFromFieldInto, TtlPropagator, type OpticalSetup,
} from "@/lib/optics/index.ts";

/**
 * Secondary spherical aberration, Noll 22 = sqrt(7) (20 rho^6 - 30 rho^4 + 12 rho^2 - 1), written out from
 * R. J. Noll, J. Opt. Soc. Am. 66, 207-211 (1976), Table I (independent of lib/optics/zernike.ts).
 */
const noll22 = (rho: number) => Math.sqrt(7) * (20 * rho ** 6 - 30 * rho ** 4 + 12 * rho ** 2 - 1);

/**
 * The far field of PHYSICS.md section 3 summed directly, cell by cell and node by node (no folding, no
 * matrix products): E(theta) = sum T exp(-r^2/w^2) exp(i k a Z22(rho')) exp(i k r^2 / 2L) exp(-i k x.theta),
 * with rho' = min(rho, 1) when `clampRho` (PHYSICS.md section 2) and rho' = rho otherwise.
 */
function directField(setup: OpticalSetup, aNm: number, thetaX: number, thetaY: number, clampRho: boolean): [number, number] {
  const radius = setup.apertureDiameterM / 2;
  const n = setup.pupilSamples;
  const k = (2 * Math.PI) / (setup.wavelengthNm * 1e-9);
  const x = pupilCoordinates(radius, n);
  const t = apertureTransmission(radius, n);
  let re = 0, im = 0;
  for (let iy = 0; iy < n; iy++) {
    for (let ix = 0; ix < n; ix++) {
      const transmission = t[iy * n + ix];
      if (transmission === 0) continue;
      const r2 = x[ix] ** 2 + x[iy] ** 2;
      const rho = Math.sqrt(r2) / radius;
      const phase = k * aNm * 1e-9 * noll22(clampRho ? Math.min(rho, 1) : rho) + (k * r2) / (2 * setup.distanceM)
        - k * (x[ix] * thetaX + x[iy] * thetaY);
      const amplitude = transmission * Math.exp(-r2 / setup.beamRadiusM ** 2);
      re += amplitude * Math.cos(phase);
      im += amplitude * Math.sin(phase);
    }
  }
  return [re, im];
}

/** c_x = (1/k) d arg E / d theta_x by a central difference of the direct sum (PHYSICS.md section 3), pm/nrad. */
function directTtlX(setup: OpticalSetup, aNm: number, thetaXNrad: number, thetaYNrad: number, clampRho: boolean): number {
  const k = (2 * Math.PI) / (setup.wavelengthNm * 1e-9);
  const step = 1e-12; // rad: the phase is smooth over nrad, so the O(step^2) error is far below the tolerance
  const [aRe, aIm] = directField(setup, aNm, thetaXNrad * 1e-9 + step, thetaYNrad * 1e-9, clampRho);
  const [bRe, bIm] = directField(setup, aNm, thetaXNrad * 1e-9 - step, thetaYNrad * 1e-9, clampRho);
  // arg(A conj(B)) is the phase difference without branch cuts.
  const dPsi = Math.atan2(aIm * bRe - aRe * bIm, aRe * bRe + aIm * bIm);
  return (dPsi / (2 * step) / k) * 1e3;
}

describe("edge cells whose centre lies outside the disc (PHYSICS.md section 2)", () => {
  // 32 x 32 samples: the coarse grid where extrapolating Noll 22 beyond the rim matters most (1.9 x the rim value).
  const setup: OpticalSetup = {
    wavelengthNm: 1064, apertureDiameterM: 0.26, beamRadiusM: 0.115, distanceM: 2.2e9,
    farField: { halfAngleNrad: 60, pointsPerAxis: 5 }, pupilSamples: 32,
  };
  const aNm = 20;
  const nodes: [number, number][] = [[0, 0], [1, 2], [3, 4], [4, 1]];

  it("evaluates the Zernike terms at rho = 1 there: the propagator matches a direct sum with the rim value", () => {
    const { x } = new TtlPropagator(setup, [22]).ttl([aNm]);
    const theta = new TtlPropagator(setup, [22]).thetaNrad;
    for (const [ix, iy] of nodes) {
      const clamped = directTtlX(setup, aNm, theta[ix], theta[iy], true);
      const extrapolated = directTtlX(setup, aNm, theta[ix], theta[iy], false);
      const got = x[iy * 5 + ix];
      // Tolerance 1e-6 of the value (plus 1e-9 pm/nrad at boresight, where c_x = 0 by symmetry): the difference
      // quotient and the two summation orders agree far better than that.
      expect(Math.abs(got - clamped)).toBeLessThan(1e-6 * Math.abs(clamped) + 1e-9);
      // The test can tell the two rules apart: off boresight, extrapolation moves c_x by far more.
      if (ix !== 2) expect(Math.abs(extrapolated - clamped)).toBeGreaterThan(1e-3 * Math.abs(clamped));
    }
  });
});

describe("an exact far-field null is reported as undefined, never NaN (PHYSICS.md section 2)", () => {
  it("ttlFromFieldInto lists a node with E = 0, writes 0 there and the closed form elsewhere", () => {
    // Two nodes. Node 0: E = 0, the phase of E is undefined. Node 1: E = 3 + 4i, E_x = 1 - 2i, E_y = 2i:
    // c = -Re(conj(E) E_.) / |E|^2 * 1e3 (PHYSICS.md section 3) = -(3 - 8) / 25 e3 = +200, -(8) / 25 e3 = -320.
    const field = {
      eRe: Float64Array.of(0, 3), eIm: Float64Array.of(0, 4),
      exRe: Float64Array.of(1, 1), exIm: Float64Array.of(1, -2),
      eyRe: Float64Array.of(1, 0), eyIm: Float64Array.of(1, 2),
    };
    const outX = new Float64Array(12).fill(7), outY = new Float64Array(12).fill(7);
    const undefinedNodes: number[] = [];
    expect(ttlFromFieldInto(field, 2, 0, outX, outY, 10, undefinedNodes)).toBe(1);
    expect(undefinedNodes).toEqual([10]);
    expect([outX[10], outY[10]]).toEqual([0, 0]);
    expect(outX[11]).toBeCloseTo(200, 10);
    expect(outY[11]).toBeCloseTo(-320, 10);
  });

  it("counts a field below the floor as a null, and an ordinary map has none", () => {
    const field = {
      eRe: Float64Array.of(1e-20), eIm: Float64Array.of(0), exRe: Float64Array.of(1), exIm: Float64Array.of(0),
      eyRe: Float64Array.of(1), eyIm: Float64Array.of(0),
    };
    const out = new Float64Array(1);
    expect(ttlFromFieldInto(field, 1, 1e-30, out, out.slice(), 0, [])).toBe(1);
    // The Velora-like setup of the edge test at 20 nm of Noll 22: every node defined.
    const setup: OpticalSetup = {
      wavelengthNm: 1064, apertureDiameterM: 0.26, beamRadiusM: 0.115, distanceM: 2.2e9,
      farField: { halfAngleNrad: 60, pointsPerAxis: 5 }, pupilSamples: 32,
    };
    expect(new TtlPropagator(setup, [22]).ttl([20]).undefinedNodes).toEqual([]);
  });
});
