/** A spectrum as `[frequency Hz, amplitude spectral density]` pairs. */
export type Spectrum = readonly (readonly [number, number])[];

/**
 * Check a spectrum: at least two points, frequencies finite, > 0 and strictly increasing, densities finite and > 0
 * (log-log interpolation needs both positive).
 * @throws {RangeError} "<name> needs at least 2 points" / "<name> frequency at point k must be a finite number > 0" /
 *   "<name> frequencies must increase strictly (point k)" / "<name> density at point k must be a finite number > 0"
 */
export function checkSpectrum(spectrum: Spectrum, name: string): void {
  if (!Array.isArray(spectrum) || spectrum.length < 2) throw new RangeError(`${name} needs at least 2 points`);
  spectrum.forEach(([f, v], k) => {
    if (typeof f !== "number" || !Number.isFinite(f) || f <= 0) throw new RangeError(`${name} frequency at point ${k} must be a finite number > 0`);
    if (k > 0 && !(f > spectrum[k - 1][0])) throw new RangeError(`${name} frequencies must increase strictly (point ${k})`);
    if (typeof v !== "number" || !Number.isFinite(v) || v <= 0) throw new RangeError(`${name} density at point ${k} must be a finite number > 0`);
  });
}

/**
 * Log-log (power-law) interpolation of a spectrum at `frequencyHz`, exact at its points:
 * `log v = log v_k + (log f - log f_k) (log v_{k+1} - log v_k) / (log f_{k+1} - log f_k)` between neighbours
 * (a straight line on log-log axes, the way densities are drawn and budgeted).
 * @throws {RangeError} "frequency F Hz lies outside the <name> (F0 to F1 Hz)"
 */
export function interpolateLogLog(spectrum: Spectrum, frequencyHz: number, name = "spectrum"): number {
  const n = spectrum.length;
  const lowest = spectrum[0][0];
  const highest = spectrum[n - 1][0];
  if (!(frequencyHz >= lowest && frequencyHz <= highest)) {
    throw new RangeError(`frequency ${frequencyHz} Hz lies outside the ${name} (${lowest} to ${highest} Hz)`);
  }
  let k = 0;
  while (k < n - 2 && spectrum[k + 1][0] < frequencyHz) k++;
  const [f0, v0] = spectrum[k];
  const [f1, v1] = spectrum[k + 1];
  if (frequencyHz === f0) return v0;
  if (frequencyHz === f1) return v1;
  const t = Math.log(frequencyHz / f0) / Math.log(f1 / f0);
  return Math.exp(Math.log(v0) + t * Math.log(v1 / v0));
}

export interface NoiseBudget {
  frequencyHz: number[];
  /** `sqrt(c_x^2 + c_y^2) ASD_theta(f)`, pm/sqrt(Hz). */
  ttlNoisePmPerRtHz: number[];
  /** The allocation interpolated onto the jitter frequencies, pm/sqrt(Hz). */
  allocationPmPerRtHz: number[];
  /** `20 log10(allocation / ASD_s)`, dB; negative where the allocation is exceeded; null where ASD_s is 0. */
  marginDb: (number | null)[];
  /** Frequencies where the margin is negative. */
  failingHz: number[];
  /** `sqrt(c_x^2 + c_y^2)` at the offset, pm/nrad. */
  couplingPmPerNrad: number;
}

/**
 * Length noise of pointing jitter against an allocation: with independent jitter of the same density on both axes,
 * `ds = c_x dtheta_x + c_y dtheta_y` gives `ASD_s(f) = sqrt(c_x^2 + c_y^2) ASD_theta(f)` (PHYSICS.md sections 3
 * and 6), in pm/sqrt(Hz) for c in pm/nrad and ASD_theta in nrad/sqrt(Hz); the margin is
 * `20 log10(allocation / ASD_s)` dB at each jitter frequency, the allocation interpolated there on log-log axes.
 *
 * @param cxPmPerNrad, cyPmPerNrad TTL coefficients at the DC offset, pm/nrad
 * @param jitterAsd `[f Hz, nrad/sqrt(Hz)]`
 * @param allocation `[f Hz, pm/sqrt(Hz)]`, covering the jitter's frequencies
 * @throws {RangeError} from {@link checkSpectrum} and {@link interpolateLogLog}; "TTL coefficients must be finite"
 */
export function noiseBudget(cxPmPerNrad: number, cyPmPerNrad: number, jitterAsd: Spectrum, allocation: Spectrum): NoiseBudget {
  if (!Number.isFinite(cxPmPerNrad) || !Number.isFinite(cyPmPerNrad)) throw new RangeError("TTL coefficients must be finite");
  checkSpectrum(jitterAsd, "jitter ASD");
  checkSpectrum(allocation, "allocation");
  const coupling = Math.hypot(cxPmPerNrad, cyPmPerNrad);
  const frequencyHz: number[] = [];
  const noise: number[] = [];
  const allocated: number[] = [];
  const margin: (number | null)[] = [];
  const failing: number[] = [];
  for (const [f, asd] of jitterAsd) {
    const s = coupling * asd;
    const a = interpolateLogLog(allocation, f, "allocation");
    const m = s === 0 ? null : 20 * Math.log10(a / s);
    frequencyHz.push(f);
    noise.push(s);
    allocated.push(a);
    margin.push(m);
    if (m !== null && m < 0) failing.push(f);
  }
  return { frequencyHz, ttlNoisePmPerRtHz: noise, allocationPmPerRtHz: allocated, marginDb: margin, failingHz: failing, couplingPmPerNrad: coupling };
}

/**
 * The node where `sqrt(c_x^2 + c_y^2)` is largest (the worst DC offset for jitter noise).
 * @param x, y c_x and c_y maps (M^2 each), pm/nrad
 * @returns the node index `iy M + ix`
 */
export function worstNoiseNode(x: ArrayLike<number>, y: ArrayLike<number>): number {
  let best = 0;
  let value = -1;
  for (let n = 0; n < x.length; n++) {
    const m = x[n] * x[n] + y[n] * y[n];
    if (m > value) {
      value = m;
      best = n;
    }
  }
  return best;
}
