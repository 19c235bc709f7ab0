import { requirePositiveFinite } from "./checks.ts";
import { requireNollIndices, ZernikeTerm } from "./zernike.ts";

/** Largest height map the fit takes (2048 x 2048 pixels). */
export const MAX_FIT_PIXELS = 2048 * 2048;

/** Piston and the two tilts: always fitted (a measured map carries them) and reported apart from the model's terms. */
const NUISANCE_TERMS = [1, 2, 3];

export type HeightUnit = "nm" | "m";

export interface HeightMap {
  /** Row-major `rows x cols`; NaN marks pixels with no data. Row iy lies at `y = (iy - (rows - 1)/2) pixel`, column ix at `x = (ix - (cols - 1)/2) pixel`. */
  values: ArrayLike<number>;
  rows: number;
  cols: number;
  pixelSizeM: number;
  apertureDiameterM: number;
  units: HeightUnit;
}

export interface ZernikeFit {
  /** Coefficients of the requested terms, in their order, nm RMS (unit-RMS Zernike normalisation). */
  coefficientsNm: Float64Array;
  /** Piston and tilt (Noll 1-3) fitted alongside when they are not among the requested terms, nm. */
  removedNm: Record<number, number>;
  /** RMS of map minus fit (all fitted terms) over the pixels used, nm. */
  residualRmsNm: number;
  /** RMS of the map over the pixels used, nm. */
  mapRmsNm: number;
  /** Pixels inside the aperture with data. */
  samplesInAperture: number;
  /** The fit of all fitted terms and the residual per pixel, nm (NaN outside the aperture or without data). */
  fitNm: Float64Array;
  residualNm: Float64Array;
}

/**
 * Least-squares fit of Zernike terms to a measured height map (taken as the wavefront error W(x, y)) over the pixels
 * whose centre lies inside the aperture and that hold data: `min sum_pixels (h - sum_j a_j Z_j)^2`. The pixel
 * basis is not exactly orthogonal (a finite, partly masked grid), so the normal equations `G a = b`,
 * `G_jk = sum Z_j Z_k`, are solved (Cholesky), not replaced by projections; G is close to `N I` for unit-RMS terms
 * on a filled disc, so its conditioning is mild. Piston and tilt are fitted too (a measured map carries them) and
 * reported apart. Heights in metres are converted to nm first, so both units give the same fit.
 *
 * @throws {RangeError} "rows and cols must be positive integers" / "the map has R x C = N pixels; the limit is
 *   4194304" / "values must have rows x cols entries" / "pixelSizeM must be a positive finite number" /
 *   "apertureDiameterM must be a positive finite number" / 'units must be "nm" or "m"' /
 *   "the map has only K pixels with data inside the aperture; at least T are needed for T terms" /
 *   "heights must be finite numbers or NaN (pixel iy, ix)" / "the fitted terms are not independent on these pixels"
 * Source: R. J. Noll, J. Opt. Soc. Am. 66, 207-211 (1976) for the terms; G. H. Golub and C. F. Van Loan, Matrix
 * Computations, 4th ed., sections 4.2 (Cholesky) and 5.3 (normal equations); PHYSICS.md section 6.
 */
export function fitZernike(map: HeightMap, nollIndices: readonly number[]): ZernikeFit {
  const { rows, cols } = map;
  if (!Number.isInteger(rows) || !Number.isInteger(cols) || rows < 1 || cols < 1) throw new RangeError("rows and cols must be positive integers");
  if (rows * cols > MAX_FIT_PIXELS) throw new RangeError(`the map has ${rows} x ${cols} = ${rows * cols} pixels; the limit is ${MAX_FIT_PIXELS}`);
  if (map.values.length !== rows * cols) throw new RangeError("values must have rows x cols entries");
  const pixel = requirePositiveFinite(map.pixelSizeM, "pixelSizeM");
  const radius = requirePositiveFinite(map.apertureDiameterM, "apertureDiameterM") / 2;
  if (map.units !== "nm" && map.units !== "m") throw new RangeError('units must be "nm" or "m"');
  const toNm = map.units === "m" ? 1e9 : 1;
  const requested = requireNollIndices(nollIndices, "Zernike set");
  const fitted = [...requested, ...NUISANCE_TERMS.filter((j) => !requested.includes(j))];
  const T = fitted.length;
  const terms = fitted.map((j) => new ZernikeTerm(j));

  const G = new Float64Array(T * T);
  const b = new Float64Array(T);
  const z = new Float64Array(T);
  let used = 0;
  let sum2 = 0;
  const forEachPixel = (visit: (index: number, rho: number, phi: number, h: number) => void) => {
    for (let iy = 0; iy < rows; iy++) {
      const y = (iy - (rows - 1) / 2) * pixel;
      for (let ix = 0; ix < cols; ix++) {
        const raw = map.values[iy * cols + ix];
        if (Number.isNaN(raw)) continue;
        if (!Number.isFinite(raw)) throw new RangeError(`heights must be finite numbers or NaN (pixel ${iy}, ${ix})`);
        const x = (ix - (cols - 1) / 2) * pixel;
        const rho = Math.hypot(x, y) / radius;
        if (rho > 1) continue;
        visit(iy * cols + ix, rho, Math.atan2(y, x), raw * toNm);
      }
    }
  };
  forEachPixel((_index, rho, phi, h) => {
    for (let k = 0; k < T; k++) z[k] = terms[k].at(rho, phi);
    for (let j = 0; j < T; j++) {
      b[j] += z[j] * h;
      for (let k = 0; k <= j; k++) G[j * T + k] += z[j] * z[k];
    }
    used++;
    sum2 += h * h;
  });
  if (used < T) throw new RangeError(`the map has only ${used} pixels with data inside the aperture; at least ${T} are needed for ${T} terms`);
  const a = choleskySolve(G, b, T);

  const fit = new Float64Array(rows * cols).fill(Number.NaN);
  const residual = new Float64Array(rows * cols).fill(Number.NaN);
  let residual2 = 0;
  forEachPixel((index, rho, phi, h) => {
    let value = 0;
    for (let k = 0; k < T; k++) value += a[k] * terms[k].at(rho, phi);
    fit[index] = value;
    residual[index] = h - value;
    residual2 += (h - value) ** 2;
  });
  const removed: Record<number, number> = {};
  fitted.slice(requested.length).forEach((j, k) => (removed[j] = a[requested.length + k]));
  return {
    coefficientsNm: a.slice(0, requested.length),
    removedNm: removed,
    residualRmsNm: Math.sqrt(residual2 / used),
    mapRmsNm: Math.sqrt(sum2 / used),
    samplesInAperture: used,
    fitNm: fit,
    residualNm: residual,
  };
}

/** Solve `G a = b` for symmetric positive definite G (lower triangle filled) by Cholesky. */
function choleskySolve(G: Float64Array, b: Float64Array, n: number): Float64Array {
  const L = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    let d = G[j * n + j];
    for (let k = 0; k < j; k++) d -= L[j * n + k] ** 2;
    if (!(d > 1e-12 * G[j * n + j]) || !(d > 0)) throw new RangeError("the fitted terms are not independent on these pixels");
    const root = Math.sqrt(d);
    L[j * n + j] = root;
    for (let i = j + 1; i < n; i++) {
      let s = G[i * n + j];
      for (let k = 0; k < j; k++) s -= L[i * n + k] * L[j * n + k];
      L[i * n + j] = s / root;
    }
  }
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= L[i * n + k] * y[k];
    y[i] = s / L[i * n + i];
  }
  const x = new Float64Array(n);
  for (let i = n - 1; i >= 0; i--) {
    let s = y[i];
    for (let k = i + 1; k < n; k++) s -= L[k * n + i] * x[k];
    x[i] = s / L[i * n + i];
  }
  return x;
}
