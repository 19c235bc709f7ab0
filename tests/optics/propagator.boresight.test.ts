import { beforeAll, describe, expect, it } from "vitest";
import { nollToOrders, onAxisGain, TtlPropagator, zernike, type OpticalSetup } from "@/lib/optics/index.ts";
import { propagateMany } from "@/lib/parallel/index.ts";
import { trainSurrogate, type SurrogateModel } from "@/lib/surrogate/index.ts";

/**
 * Gauss-Legendre nodes and weights on [a, b] (G. H. Golub and J. H. Welsch, Math. Comp. 23, 221-230 (1969) give
 * the theory; here the usual Newton iteration on P_n, as in W. H. Press et al., Numerical Recipes, 3rd ed.,
 * section 4.6). Exact for polynomials of degree 2n - 1.
 */
function gaussLegendre(n: number, a: number, b: number): { x: number[]; w: number[] } {
  const x: number[] = new Array(n), w: number[] = new Array(n);
  for (let i = 0; i < (n + 1) / 2; i++) {
    let z = Math.cos((Math.PI * (i + 0.75)) / (n + 0.5));
    let dp = 0;
    for (let iteration = 0; iteration < 100; iteration++) {
      let p0 = 1, p1 = 0;
      for (let j = 0; j < n; j++) [p0, p1] = [((2 * j + 1) * z * p0 - j * p1) / (j + 1), p0];
      dp = (n * (z * p0 - p1)) / (z * z - 1);
      const step = p0 / dp;
      z -= step;
      if (Math.abs(step) < 1e-15) break;
    }
    const half = (b - a) / 2, mid = (b + a) / 2;
    x[i] = mid - half * z;
    x[n - 1 - i] = mid + half * z;
    w[i] = w[n - 1 - i] = (2 * half) / ((1 - z * z) * dp * dp);
  }
  return { x, w };
}

/**
 * Amplitude-weighted covariances over the disc by a plain polar quadrature (Gauss-Legendre in r, uniform in phi,
 * exact for the trigonometric polynomials of the Zernike terms), independent of the propagator's grid and
 * transforms: `Cov_A(W, x_i x_j) = <W x_i x_j>_A - <W>_A <x_i x_j>_A`, `A = exp(-r^2/w^2)` inside r <= R.
 * Returns [Cov(Z, x^2), Cov(Z, x y), Cov(Z, y^2)] for a unit-RMS term Z (m^2 per unit of Z).
 */
function amplitudeCovariances(radiusM: number, beamRadiusM: number, noll: number): [number, number, number] {
  const radial = gaussLegendre(64, 0, radiusM);
  const angles = 128;
  let sumA = 0, sumW = 0, sumXX = 0, sumXY = 0, sumYY = 0, sumWXX = 0, sumWXY = 0, sumWYY = 0;
  for (let i = 0; i < radial.x.length; i++) {
    const r = radial.x[i];
    for (let j = 0; j < angles; j++) {
      const phi = (2 * Math.PI * (j + 0.5)) / angles;
      const weight = radial.w[i] * r * Math.exp(-(r * r) / beamRadiusM ** 2);
      const x = r * Math.cos(phi), y = r * Math.sin(phi);
      const z = zernike(noll, r / radiusM, phi);
      sumA += weight; sumW += weight * z;
      sumXX += weight * x * x; sumXY += weight * x * y; sumYY += weight * y * y;
      sumWXX += weight * z * x * x; sumWXY += weight * z * x * y; sumWYY += weight * z * y * y;
    }
  }
  const mean = (s: number) => s / sumA;
  return [
    mean(sumWXX) - mean(sumW) * mean(sumXX),
    mean(sumWXY) - mean(sumW) * mean(sumXY),
    mean(sumWYY) - mean(sumW) * mean(sumYY),
  ];
}

/*
 * PHYSICS.md section 4, check 8 (derived there, restated): with A = T exp(-r^2/w^2) and <f>_A = sum A f / sum A,
 * for small W and small theta (L large, so the Fresnel factor is 1)
 *   E(theta) = sum A exp(i k W) exp(-i k x.theta)
 *            ~ sum A (1 + i k W)(1 - i k x.theta - k^2 (x.theta)^2 / 2)
 *            = (sum A) [1 - (k^2/2) <(x.theta)^2> + i k (<W> - (k^2/2) <W (x.theta)^2>) + (odd in theta)].
 * Its phase, to first order in W and second order in theta, is psi = k (<W> - (k^2/2) Cov_A(W, (x.theta)^2))
 * (the terms odd in theta, k <x.theta> and k^2 <W x.theta>, cancel or vanish for a centred A and enter only the
 * steering, not the even part; the Cov follows from dividing by the real part 1 - (k^2/2) <(x.theta)^2>).
 * The optical path is psi / k and c_i = d(psi/k)/d theta_i, so
 *   c_i(theta) = -k^2 sum_j theta_j Cov_A(W, x_i x_j),
 * and for W = a Z the boresight slope dc_i/dtheta_j = -k^2 a Cov_A(Z, x_i x_j): fixed by a quadrature alone.
 * It vanishes for odd m: x_i x_j is even under (x, y) -> (-x, -y) and an odd-m term is odd, so Cov_A = 0.
 * For an unclipped Gaussian and defocus, Cov_A(Z4, x^2) = (2 sqrt(3) / R^2) Var(x^2) with Var(x^2) = 2 s^4,
 * s^2 = w^2/2 the variance of the amplitude weight: c_x = -k^2 (2 sqrt(3) a / R^2) (w^4/2) theta_x, the
 * small-a limit of check 3's closed form -k^2 c theta_x / (2 (1/w^4 + k^2 c^2)).
 */
describe("first-order boresight slope from a quadrature (PHYSICS.md section 4, check 8)", () => {
  const setup: OpticalSetup = {
    wavelengthNm: 1064, apertureDiameterM: 0.26, beamRadiusM: 0.115, distanceM: 1e18,
    farField: { halfAngleNrad: 1, pointsPerAxis: 3 }, pupilSamples: 256,
  };
  const k = (2 * Math.PI) / (setup.wavelengthNm * 1e-9);
  const radius = setup.apertureDiameterM / 2;
  const terms = [2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13];
  /** Slopes dc_x/dtheta_x, dc_x/dtheta_y, dc_y/dtheta_x, dc_y/dtheta_y per nm, pm/nrad per nrad. */
  const expected = (noll: number) => {
    const [xx, xy, yy] = amplitudeCovariances(radius, setup.beamRadiusM, noll);
    // m/rad per rad per m of W: -k^2 Cov; per nm of coefficient: * 1e-9; pm/nrad per nrad: * 1e3 * 1e-9.
    const scale = -k * k * 1e-9 * 1e-6;
    return [scale * xx, scale * xy, scale * xy, scale * yy];
  };
  const largest = Math.max(...terms.flatMap((j) => expected(j).map(Math.abs)));

  /** Central differences over the 3 x 3 grid at +-h of c(a) - c(0), per nm. */
  function slopes(x: ArrayLike<number>, y: ArrayLike<number>, h: number): number[] {
    // Row-major [iy][ix]: (ix 2, iy 1) = +h along x, (ix 0, iy 1) = -h; (ix 1, iy 2) / (ix 1, iy 0) along y.
    const dX = (map: ArrayLike<number>) => (map[1 * 3 + 2] - map[1 * 3 + 0]) / (2 * h);
    const dY = (map: ArrayLike<number>) => (map[2 * 3 + 1] - map[0 * 3 + 1]) / (2 * h);
    return [dX(x), dY(x), dX(y), dY(y)];
  }

  it("the quadrature itself: zero for every odd-m term, non-zero for m = 0 and m = 2, and the defocus limit", () => {
    for (const j of terms) {
      const { m } = nollToOrders(j);
      const s = expected(j);
      // Odd m: exactly zero in exact arithmetic; 1e-12 of the largest slope is rounding.
      if (Math.abs(m) % 2 === 1) for (const v of s) expect(Math.abs(v)).toBeLessThan(1e-12 * largest);
      else expect(Math.max(...s.map(Math.abs))).toBeGreaterThan(1e-3 * largest);
    }
    // Unclipped limit (R = 6 w, so exp(-R^2/w^2) ~ 2e-16): slope -k^2 (2 sqrt(3)/R^2)(w^4/2) per m of a.
    const w = 0.02;
    const [xx] = amplitudeCovariances(radius, w, 4);
    expect(xx / ((2 * Math.sqrt(3) / radius ** 2) * (w ** 4 / 2)) - 1).toBeCloseTo(0, 9);
  });

  it("matches the propagator's slope near boresight for Noll 2-13 to 0.1 % of the largest slope", () => {
    const propagator = new TtlPropagator(setup, terms);
    const zero = propagator.ttl(new Float64Array(terms.length));
    const aNm = 0.05; // k a = 3e-4 rad: second-order terms in W are 3e-4 of the first-order ones
    let worst = 0;
    terms.forEach((j, t) => {
      const a = new Float64Array(terms.length);
      a[t] = aNm;
      const { x, y } = propagator.ttl(a);
      const got = slopes(x.map((v, i) => (v - zero.x[i]) / aNm), y.map((v, i) => (v - zero.y[i]) / aNm), 1);
      const want = expected(j);
      for (let q = 0; q < 4; q++) worst = Math.max(worst, Math.abs(got[q] - want[q]) / largest);
    });
    // Tolerance 0.1 %: the propagator's 256^2 area-weighted edge against the exact disc of the quadrature
    // (PHYSICS.md section 2: about 0.1 % of the TTL at 256^2), plus the O(k a) and O((k h R)^2) remainders;
    // seen: 0.007 %.
    expect(worst).toBeLessThan(1e-3);
  });

  describe("the linear maps of a first-order surrogate trained near boresight", () => {
    let model: SurrogateModel;
    beforeAll(async () => {
      const result = await trainSurrogate(
        {
          setup: { ...setup, pupilSamples: 128 }, zernike: { ordering: "noll", indices: terms }, order: 1,
          generatingSet: { design: "random", size: 60, maxRmsNm: 0.05, seed: 3 },
          validationSet: null, softwareVersion: "test", createdAt: "2026-12-01T00:00:00.000Z",
        },
        (noll, coefficientsNm, onProgress) => propagateMany({ ...setup, pupilSamples: 128 }, noll, coefficientsNm, { threads: 1, onProgress }),
        () => {},
      );
      model = result.model;
    });

    it("have the quadrature's slope at boresight for every term, to 0.2 % of the largest slope", () => {
      const P = 2 * 9;
      let worst = 0;
      model.terms.forEach((term, t) => {
        if (term.length !== 1) return;
        const row = model.coefficients.subarray(t * P, (t + 1) * P);
        const got = slopes(row.subarray(0, 9), row.subarray(9, 18), 1);
        const want = expected(term[0]);
        for (let q = 0; q < 4; q++) worst = Math.max(worst, Math.abs(got[q] - want[q]) / largest);
      });
      // 0.2 %: a 128^2 pupil (up to 0.3 % of the TTL, PHYSICS.md section 2, less for smooth low orders), Float32
      // storage of the coefficients (1e-7), and the quadratic remainder of random wavefronts up to 0.05 nm absorbed
      // by the linear fit; seen: 0.03 %.
      expect(worst).toBeLessThan(2e-3);
    });
  });
});

/*
 * PHYSICS.md section 4, check 9. With the pupil field A = exp(-r^2/w^2) inside r <= R and W = 0, the on-axis field
 * is E(0) = sum A dA ~ pi w^2 (1 - exp(-alpha^2)). A uniformly filled aperture of area pi R^2 carrying the same
 * beam power P = integral exp(-2 r^2/w^2) dA = pi w^2 / 2 (Gaussian integral) has |E_u(0)|^2 = P pi R^2. Their
 * ratio |E(0)|^2 / (P pi R^2) = 2 (1 - exp(-alpha^2))^2 / alpha^2 is Klein and Degnan's g(alpha)
 * (Appl. Opt. 13, 2134-2141 (1974), citation from memory in PHYSICS.md).
 */
describe("on-axis gain of the truncated Gaussian from the propagator (PHYSICS.md section 4, check 9)", () => {
  it.each([0.5, 1.0, 1.121, 0.13 / 0.115, 1.5, 2.0])("reproduces g(alpha) at alpha = %f to 0.01 %", (alpha) => {
    const radius = 0.13, w = radius / alpha, n = 256;
    const setup: OpticalSetup = {
      wavelengthNm: 1064, apertureDiameterM: 2 * radius, beamRadiusM: w, distanceM: 1e18,
      farField: { halfAngleNrad: 1, pointsPerAxis: 3 }, pupilSamples: n,
    };
    const re = new Float64Array(9), im = new Float64Array(9);
    new TtlPropagator(setup, [4]).fieldInto([0], re, im);
    // fieldInto returns sum U over the cells; times the cell area dA it is the integral.
    const cellArea = ((2 * radius) / n) ** 2;
    const intensity = (re[4] ** 2 + im[4] ** 2) * cellArea ** 2;
    const beamPower = (Math.PI * w * w) / 2;
    const gain = intensity / (beamPower * Math.PI * radius * radius);
    // 0.01 %: the area-weighted 256^2 edge integrates the smooth amplitude far better than it resolves the TTL
    // (0.1 %, PHYSICS.md section 2); seen: 0.0012 %.
    expect(Math.abs(gain / onAxisGain(alpha) - 1)).toBeLessThan(1e-4);
  });
});
