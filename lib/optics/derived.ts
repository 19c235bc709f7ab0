import { requirePositiveFinite } from "./checks.ts";
import type { OpticalSetup } from "./types.ts";

/** The fields of a setup the derived quantities depend on. */
export type DerivedInput = Pick<OpticalSetup, "wavelengthNm" | "apertureDiameterM" | "beamRadiusM" | "distanceM">;

/** Quantities derived from a setup, shown beside it (API GET /setups). */
export interface DerivedQuantities {
  /** `lambda / D` in nrad. */
  diffractionAngleNrad: number;
  /** `w / R`: beam radius (1/e^2 intensity) over aperture radius. */
  beamToApertureRatio: number;
  /** `R^2 / (lambda L)`. */
  fresnelNumber: number;
  /** `g(alpha)` at this setup's `alpha = R / w` (PHYSICS.md section 4, check 9). */
  onAxisGain: number;
  /** The `alpha = R / w` that maximises `g`. */
  optimumAlpha: number;
  /** `g` at `optimumAlpha`. */
  optimumGain: number;
}

/**
 * Diffraction angle `lambda / D`, in nrad.
 * @param wavelengthNm wavelength, nm
 * @param apertureDiameterM aperture diameter, m
 * @throws RangeError unless both are positive and finite
 */
export function diffractionAngleNrad(wavelengthNm: number, apertureDiameterM: number): number {
  // lambda [m] / D [m] * 1e9 nrad/rad = wavelengthNm * 1e-9 / D * 1e9.
  return requirePositiveFinite(wavelengthNm, "wavelengthNm") / requirePositiveFinite(apertureDiameterM, "apertureDiameterM");
}

/**
 * Beam-to-aperture ratio `w / R`: the beam radius (1/e^2 intensity radius at the pupil) over
 * the aperture radius `R = D / 2`; the inverse of the truncation ratio `alpha = R / w`.
 * @param beamRadiusM beam radius w, m
 * @param apertureDiameterM aperture diameter D, m
 * @throws RangeError unless both are positive and finite
 */
export function beamToApertureRatio(beamRadiusM: number, apertureDiameterM: number): number {
  return requirePositiveFinite(beamRadiusM, "beamRadiusM") / (requirePositiveFinite(apertureDiameterM, "apertureDiameterM") / 2);
}

/**
 * Fresnel number `N_F = R^2 / (lambda L)` of the aperture radius R at distance L
 * (J. W. Goodman, Introduction to Fourier Optics, section 4.2); far field when `N_F << 1`.
 * @param wavelengthNm wavelength, nm
 * @param apertureDiameterM aperture diameter D = 2 R, m
 * @param distanceM propagation distance L, m
 * @throws RangeError unless all are positive and finite
 */
export function fresnelNumber(wavelengthNm: number, apertureDiameterM: number, distanceM: number): number {
  const r = requirePositiveFinite(apertureDiameterM, "apertureDiameterM") / 2;
  return (r * r) / (requirePositiveFinite(wavelengthNm, "wavelengthNm") * 1e-9 * requirePositiveFinite(distanceM, "distanceM"));
}

/**
 * On-axis gain of a truncated Gaussian beam relative to a uniformly filled aperture of the same
 * size: `g(alpha) = 2 (1 - exp(-alpha^2))^2 / alpha^2`, `alpha = R / w` (B. J. Klein and
 * J. J. Degnan, "Optical antenna gain. 1: Transmitting antennas", Appl. Opt. 13, 2134-2141
 * (1974)). Tends to 0 both for alpha -> 0 (overfilled) and alpha -> infinity (underfilled).
 * @param alpha truncation ratio R / w, dimensionless
 * @throws RangeError unless alpha is positive and finite
 */
export function onAxisGain(alpha: number): number {
  requirePositiveFinite(alpha, "alpha");
  const u = alpha * alpha;
  // -expm1(-u) = 1 - exp(-u) without cancellation for small alpha.
  const f = -Math.expm1(-u);
  return (2 * f * f) / u;
}

const INV_PHI = (Math.sqrt(5) - 1) / 2;

/**
 * Maximum of a unimodal function on `[lo, hi]` by golden-section search (J. Kiefer, "Sequential
 * minimax search for a maximum", Proc. Amer. Math. Soc. 4, 502-506 (1953)); stops when the
 * bracket is narrower than `tolerance`.
 */
function goldenSectionMax(f: (x: number) => number, lo: number, hi: number, tolerance: number): number {
  let a = lo, b = hi;
  let c = b - INV_PHI * (b - a), d = a + INV_PHI * (b - a);
  let fc = f(c), fd = f(d);
  while (b - a > tolerance) {
    if (fc > fd) {
      b = d; d = c; fd = fc;
      c = b - INV_PHI * (b - a); fc = f(c);
    } else {
      a = c; c = d; fc = fd;
      d = a + INV_PHI * (b - a); fd = f(d);
    }
  }
  return (a + b) / 2;
}

let optimum: { alpha: number; gain: number } | undefined;

/**
 * The truncation ratio `alpha = R / w` that maximises `onAxisGain`, found numerically by golden
 * section on [0.5, 2] (g is unimodal there), and the gain there (about 1.121 and 0.8145, Klein
 * and Degnan 1974).
 */
export function onAxisGainOptimum(): { alpha: number; gain: number } {
  if (!optimum) {
    const alpha = goldenSectionMax(onAxisGain, 0.5, 2, 1e-10);
    optimum = { alpha, gain: onAxisGain(alpha) };
  }
  return { ...optimum };
}

/**
 * Derived quantities of a setup: diffraction angle `lambda / D` (nrad), `w / R`, Fresnel number
 * `R^2 / (lambda L)`, on-axis gain `g(R / w)` and the optimum of `g`.
 * @throws TypeError / RangeError when a field used is not a positive finite number
 */
export function derivedQuantities(setup: DerivedInput): DerivedQuantities {
  const { wavelengthNm, apertureDiameterM, beamRadiusM, distanceM } = setup;
  const ratio = beamToApertureRatio(beamRadiusM, apertureDiameterM);
  const best = onAxisGainOptimum();
  return {
    diffractionAngleNrad: diffractionAngleNrad(wavelengthNm, apertureDiameterM),
    beamToApertureRatio: ratio,
    fresnelNumber: fresnelNumber(wavelengthNm, apertureDiameterM, distanceM),
    onAxisGain: onAxisGain(1 / ratio),
    optimumAlpha: best.alpha,
    optimumGain: best.gain,
  };
}
