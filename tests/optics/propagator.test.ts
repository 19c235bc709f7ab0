import { describe, expect, it } from "vitest";
import referenceJson from "../fixtures/optics/demo-setup-ttl.json" with { type: "json" };
import {
  TtlPropagator, nollToOrders, toNollIndex, unionNollIndices, wavefrontToVector, type OpticalSetup, type Wavefront,
} from "@/lib/optics/index.ts";
import { randomDesign } from "@/lib/surrogate/designs.ts";

interface ReferenceNode { ix: number; iy: number; ttlXPmPerNrad: number; ttlYPmPerNrad: number }
interface ReferenceFixture {
  setup: OpticalSetup;
  cases: { wfe: Wavefront; peakAbsTtlPmPerNrad: number; nodes: ReferenceNode[] }[];
}
const reference = referenceJson as unknown as ReferenceFixture;
const DEMO: OpticalSetup = reference.setup;
const NOLL_4_36 = Array.from({ length: 33 }, (_, i) => i + 4);

function peakAbs(...maps: Float64Array[]): number {
  let peak = 0;
  for (const map of maps) for (const v of map) peak = Math.max(peak, Math.abs(v));
  return peak;
}

/** A seeded wavefront over Noll 4-36 scaled to exactly `rmsNm` total RMS. */
function randomWavefront(rmsNm: number, seed: number): Float64Array {
  const a = randomDesign(NOLL_4_36.length, { size: 1, maxRmsNm: 1, seed });
  const norm = Math.hypot(...a);
  return a.map((v) => (v * rmsNm) / norm);
}

/**
 * Bessel J1 by its power series, J1(v) = sum_k (-1)^k (v/2)^(2k+1) / (k! (k+1)!)
 * (Abramowitz and Stegun, Handbook of Mathematical Functions, 9.1.10); 40 terms are exact to
 * double precision for v < 12.
 */
function besselJ1(v: number): number {
  let term = v / 2, sum = term;
  for (let k = 1; k < 40; k++) {
    term *= -(v * v) / (4 * k * (k + 1));
    sum += term;
  }
  return sum;
}

describe("TtlPropagator against the independent reference", () => {
  // Independent NumPy reference calculation, 1024^2 samples (shared/reference/demo-setup-ttl.json,
  // copied to tests/fixtures/optics). Its stated agreement at 128^2 samples: 1 % of each map's peak |TTL|.
  it.each(reference.cases.map((c, i) => [i + 1, c] as const))("case %i matches node by node within 1 % of peak", (_, c) => {
    const keys = Object.keys(c.wfe.coefficientsNm);
    const noll = keys.map((k) => toNollIndex(c.wfe.ordering, Number(k)));
    const coefficients = keys.map((k) => c.wfe.coefficientsNm[k]);
    const { x, y } = new TtlPropagator(DEMO, noll).ttl(coefficients);
    const m = DEMO.farField.pointsPerAxis;
    for (const node of c.nodes) {
      const i = node.iy * m + node.ix;
      expect(Math.abs(x[i] - node.ttlXPmPerNrad)).toBeLessThan(0.01 * c.peakAbsTtlPmPerNrad);
      expect(Math.abs(y[i] - node.ttlYPmPerNrad)).toBeLessThan(0.01 * c.peakAbsTtlPmPerNrad);
    }
  });
});

describe("TtlPropagator checks with known answers (PHYSICS.md section 4)", () => {
  it("gives the Airy pattern [2 J1(v)/v]^2 with its first zero at 1.22 lambda/D for a uniform beam", () => {
    // Born and Wolf, Principles of Optics, section 8.5.2: uniform circular aperture, v = k R sin(theta).
    // w = 1e6 m makes the amplitude flat to 1e-14; L = 1e18 m removes the Fresnel curvature.
    const lambdaM = 1064e-9, diameterM = 0.26;
    const halfAngleNrad = 2 * 1.22 * (lambdaM / diameterM) * 1e9;
    const m = 201;
    const setup: OpticalSetup = {
      wavelengthNm: 1064, apertureDiameterM: diameterM, beamRadiusM: 1e6, distanceM: 1e18,
      farField: { halfAngleNrad, pointsPerAxis: m }, pupilSamples: 256,
    };
    const propagator = new TtlPropagator(setup, [4]);
    const re = new Float64Array(m * m), im = new Float64Array(m * m);
    propagator.fieldInto([0], re, im);
    const centre = (m - 1) / 2;
    const rowStart = centre * m;
    const peak = re[rowStart + centre] ** 2 + im[rowStart + centre] ** 2;
    const k = (2 * Math.PI) / lambdaM;
    let zeroNode = centre;
    for (let ix = centre; ix < m; ix++) {
      const theta = propagator.thetaNrad[ix] * 1e-9;
      const v = k * (diameterM / 2) * Math.sin(theta);
      const airy = v === 0 ? 1 : (2 * besselJ1(v) / v) ** 2;
      const intensity = (re[rowStart + ix] ** 2 + im[rowStart + ix] ** 2) / peak;
      // 2e-3 of the peak: the 256-sample area-weighted edge (PHYSICS.md section 2 gives ~0.1 % at 256^2).
      expect(Math.abs(intensity - airy)).toBeLessThan(2e-3);
      const prev = re[rowStart + zeroNode] ** 2 + im[rowStart + zeroNode] ** 2;
      if (propagator.thetaNrad[ix] < 1.5 * (lambdaM / diameterM) * 1e9 && intensity * peak < prev) zeroNode = ix;
    }
    const step = propagator.thetaNrad[1] - propagator.thetaNrad[0];
    expect(Math.abs(propagator.thetaNrad[zeroNode] - 1.22 * (lambdaM / diameterM) * 1e9)).toBeLessThanOrEqual(step);
    expect((re[rowStart + zeroNode] ** 2 + im[rowStart + zeroNode] ** 2) / peak).toBeLessThan(1e-4);
  });

  // Unclipped Gaussian with defocus: c_x = -k^2 c theta_x / (2 (1/w^4 + k^2 c^2)), c = 2 sqrt(3) a / R^2 + 1/(2L),
  // from the Gaussian Fourier pair (J. W. Goodman, Introduction to Fourier Optics, Table 2.1); PHYSICS.md 4.3.
  function defocusClosedForm(setup: OpticalSetup, aNm: number, thetaXNrad: number): number {
    const k = (2 * Math.PI) / (setup.wavelengthNm * 1e-9);
    const radius = setup.apertureDiameterM / 2;
    const c = (2 * Math.sqrt(3) * aNm * 1e-9) / radius ** 2 + 1 / (2 * setup.distanceM);
    const w = setup.beamRadiusM;
    return ((-k * k * c * thetaXNrad * 1e-9) / (2 * (1 / w ** 4 + k * k * c * c))) * 1e3;
  }

  it("reproduces the worked defocus example, +0.006163 pm/nrad at theta_x = -50 nrad, to 0.1 %", () => {
    const setup: OpticalSetup = {
      wavelengthNm: 1064, apertureDiameterM: 0.35, beamRadiusM: 0.05, distanceM: 2e9,
      farField: { halfAngleNrad: 50, pointsPerAxis: 5 }, pupilSamples: 128,
    };
    const { x, y } = new TtlPropagator(setup, [4]).ttl([10]);
    const atMinus50 = x[2 * 5 + 0]; // iy = 2 (theta_y = 0), ix = 0 (theta_x = -50 nrad)
    expect(defocusClosedForm(setup, 10, -50)).toBeCloseTo(0.006163, 6); // PHYSICS.md 4.3 worked value
    expect(Math.abs(atMinus50 / 0.006163 - 1)).toBeLessThan(1e-3);
    for (let ix = 0; ix < 5; ix++) {
      const exact = defocusClosedForm(setup, 10, setup.farField.halfAngleNrad * (ix - 2) / 2);
      expect(Math.abs(x[10 + ix] - exact)).toBeLessThan(1e-3 * 0.006163);
      expect(Math.abs(y[10 + ix])).toBeLessThan(1e-12); // theta_y = 0: no y coupling by symmetry
    }
  });

  it("converges to the defocus closed form as the clipping recedes (R = 5 w: 1e-6)", () => {
    // The remaining 0.07 % at R = 3.5 w is the clipped tail; at R = 5 w the tail is exp(-25) and the
    // closed form must hold to 1e-6 relative at the same pupil curvature.
    const setup: OpticalSetup = {
      wavelengthNm: 1064, apertureDiameterM: 0.5, beamRadiusM: 0.05, distanceM: 2e9,
      farField: { halfAngleNrad: 50, pointsPerAxis: 5 }, pupilSamples: 256,
    };
    const aNm = 10 * (0.25 / 0.175) ** 2;
    const { x } = new TtlPropagator(setup, [4]).ttl([aNm]);
    for (let ix = 0; ix < 5; ix++) {
      const exact = defocusClosedForm(setup, aNm, 25 * (ix - 2));
      expect(Math.abs(x[10 + ix] - exact)).toBeLessThan(1e-6 * 0.006163);
    }
  });

  it("gives zero TTL for pure tilt on an unclipped beam", () => {
    // PHYSICS.md 4.4: U = (real, centred) x exp(i alpha x) transforms to a shifted real function, whose phase
    // is constant: c = 0 up to rounding. Compare with the 0.006 pm/nrad a 10 nm defocus gives.
    const setup: OpticalSetup = {
      wavelengthNm: 1064, apertureDiameterM: 0.4, beamRadiusM: 0.05, distanceM: 1e18,
      farField: { halfAngleNrad: 60, pointsPerAxis: 9 }, pupilSamples: 128,
    };
    const { x, y } = new TtlPropagator(setup, [2, 3]).ttl([10, -7]);
    expect(peakAbs(x, y)).toBeLessThan(1e-12);
  });

  it("gives zero TTL at boresight and antisymmetric maps for zero wavefront error", () => {
    // PHYSICS.md 4.5: a rotationally symmetric pupil field gives c_x(tx, ty) = -c_x(-tx, ty), c_y likewise in ty.
    const propagator = new TtlPropagator(DEMO, NOLL_4_36);
    const { x, y } = propagator.ttl(new Float64Array(33));
    const m = DEMO.farField.pointsPerAxis;
    const centre = (m - 1) / 2;
    // Tolerance 1e-12 pm/nrad: rounding of the sums. For scale, 1 nm of defocus gives ~5e-3 pm/nrad here,
    // and the Fresnel curvature alone gives the small symmetric map checked below.
    const tolerance = 1e-12;
    expect(peakAbs(x, y)).toBeGreaterThan(0); // the Fresnel curvature does couple, slightly
    expect(peakAbs(x, y)).toBeLessThan(1e-4);
    expect(Math.abs(x[centre * m + centre])).toBeLessThan(tolerance);
    expect(Math.abs(y[centre * m + centre])).toBeLessThan(tolerance);
    for (let iy = 0; iy < m; iy++) {
      for (let ix = 0; ix < m; ix++) {
        expect(Math.abs(x[iy * m + ix] + x[iy * m + (m - 1 - ix)])).toBeLessThan(tolerance);
        expect(Math.abs(y[iy * m + ix] + y[(m - 1 - iy) * m + ix])).toBeLessThan(tolerance);
        expect(Math.abs(x[iy * m + ix] - y[ix * m + iy])).toBeLessThan(tolerance); // x <-> y symmetry
      }
    }
  });

  it("finds linear coupling carried by the m = 0 and m = 2 terms: nine of Noll 4-36", () => {
    // PHYSICS.md 4.6, common practice, no source: even-parity terms shift the far-field phase to first order,
    // odd-parity ones (odd m) only steer; |m| >= 4 enters as (k R theta)^|m| - 1 ~ 0.05^3 here.
    // Linear coefficient A_i by central difference of exact maps at +-1 nm; rank by its peak over the map.
    const propagator = new TtlPropagator(DEMO, NOLL_4_36);
    const strength = NOLL_4_36.map((j, t) => {
      const plus = new Float64Array(33), minus = new Float64Array(33);
      plus[t] = 1;
      minus[t] = -1;
      const p = propagator.ttl(plus), q = propagator.ttl(minus);
      const slopeX = p.x.map((v, i) => (v - q.x[i]) / 2);
      const slopeY = p.y.map((v, i) => (v - q.y[i]) / 2);
      return { j, peak: peakAbs(slopeX, slopeY) };
    });
    strength.sort((a, b) => b.peak - a.peak);
    const top = strength.slice(0, 9).map((s) => s.j).sort((a, b) => a - b);
    expect(top).toEqual([4, 5, 6, 11, 12, 13, 22, 23, 24]);
    for (const j of top) expect([0, 2]).toContain(Math.abs(nollToOrders(j).m));
    expect(strength[9].peak).toBeLessThan(0.05 * strength[8].peak);
  });
});

describe("TtlPropagator numerics", () => {
  it("converges with pupil samples: 128 vs 512 within 1 % of peak for 30 nm RMS", () => {
    // PHYSICS.md section 2 states ~0.3 % of peak at 128^2 for 30 nm RMS random wavefront error.
    const a = randomWavefront(30, 2026);
    const coarse = new TtlPropagator(DEMO, NOLL_4_36).ttl(a);
    const fine = new TtlPropagator({ ...DEMO, pupilSamples: 512 }, NOLL_4_36).ttl(a);
    const peak = peakAbs(fine.x, fine.y);
    const diff = peakAbs(coarse.x.map((v, i) => v - fine.x[i]), coarse.y.map((v, i) => v - fine.y[i]));
    expect(diff).toBeLessThan(0.01 * peak);
  });

  it("agrees between odd and even pupil grids (127 vs 128 samples) within 1 % of peak", () => {
    const a = randomWavefront(20, 7);
    const even = new TtlPropagator(DEMO, NOLL_4_36).ttl(a);
    const odd = new TtlPropagator({ ...DEMO, pupilSamples: 127 }, NOLL_4_36).ttl(a);
    const peak = peakAbs(even.x, even.y);
    expect(peakAbs(odd.x.map((v, i) => v - even.x[i]), odd.y.map((v, i) => v - even.y[i]))).toBeLessThan(0.01 * peak);
  });

  it("gives the same map for a wavefront written in Noll or in ANSI indices", () => {
    // Reference cases 2 and 3 are one wavefront in both orderings (independent NumPy reference calculation).
    const [noll, ansi] = [reference.cases[1].wfe, reference.cases[2].wfe];
    expect(ansi.ordering).toBe("ansi");
    const terms = unionNollIndices([noll, ansi]);
    expect(terms).toEqual(unionNollIndices([noll]));
    const propagator = new TtlPropagator(DEMO, terms);
    const a = propagator.ttl(wavefrontToVector(noll, terms));
    const b = propagator.ttl(wavefrontToVector(ansi, terms));
    expect(Array.from(b.x)).toEqual(Array.from(a.x));
    expect(Array.from(b.y)).toEqual(Array.from(a.y));
  });
});

describe("TtlPropagator input checks", () => {
  const bad = (patch: Record<string, unknown>) => ({ ...DEMO, ...patch }) as OpticalSetup;
  it.each([
    [{ wavelengthNm: 0 }, new RangeError("wavelengthNm must be a positive finite number")],
    [{ wavelengthNm: Number.NaN }, new RangeError("wavelengthNm must be a positive finite number")],
    [{ apertureDiameterM: -1 }, new RangeError("apertureDiameterM must be a positive finite number")],
    [{ beamRadiusM: 0 }, new RangeError("beamRadiusM must be a positive finite number")],
    [{ distanceM: Number.POSITIVE_INFINITY }, new RangeError("distanceM must be a positive finite number")],
    [{ farField: { halfAngleNrad: -5, pointsPerAxis: 25 } }, new RangeError("farField.halfAngleNrad must be a positive finite number")],
    [{ farField: { halfAngleNrad: 60, pointsPerAxis: 24 } }, new RangeError("farField.pointsPerAxis must be an odd integer >= 3")],
    [{ farField: { halfAngleNrad: 60, pointsPerAxis: 1 } }, new RangeError("farField.pointsPerAxis must be an odd integer >= 3")],
    [{ pupilSamples: 16 }, new RangeError("pupilSamples must be an integer between 32 and 1024")],
    [{ pupilSamples: 2048 }, new RangeError("pupilSamples must be an integer between 32 and 1024")],
    [{ pupilSamples: 100.5 }, new RangeError("pupilSamples must be an integer between 32 and 1024")],
    [{ wavelengthNm: "1064" }, new TypeError("wavelengthNm must be a number")],
    [{ farField: undefined }, new TypeError("farField must be an object")],
  ])("rejects %o", (patch, error) => {
    expect(() => new TtlPropagator(bad(patch), [4])).toThrow(error);
  });

  it("rejects invalid indices and non-finite coefficients", () => {
    expect(() => new TtlPropagator(DEMO, [0])).toThrow(RangeError);
    const propagator = new TtlPropagator(DEMO, [4, 5]);
    expect(() => propagator.ttl([1, Number.NaN])).toThrow(new RangeError("coefficient of Noll term 5 must be a finite number"));
    expect(() => propagator.ttl([1, Number.POSITIVE_INFINITY])).toThrow(RangeError);
    expect(() => propagator.ttl([1])).toThrow(new RangeError("expected 2 coefficients (one per term), got 1"));
  });
});
