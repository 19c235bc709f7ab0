import { SplitMix64 } from "./prng.ts";

/** Generating-set designs built into the product; `uploaded` sets come with their own coefficients and maps. */
export type DesignName = "random" | "axes-and-pairs" | "uploaded";

export interface RandomDesignOptions {
  /** Number of samples S. */
  size: number;
  /** Radius of the ball of total RMS wavefront error, nm. */
  maxRmsNm: number;
  /** Seed of the SplitMix64 generator. */
  seed: number;
}

/**
 * Samples uniform in the ball `sqrt(sum a_j^2) <= maxRmsNm` of J Zernike coefficients: a direction from J
 * independent standard normal deviates (uniform on the sphere), and a radius `maxRmsNm u^(1/J)` with `u`
 * uniform in [0, 1) (the radial law of a uniform ball).
 *
 * @param termCountJ number of Zernike terms J
 * @returns row-major `size x J` coefficients, nm RMS
 * @throws {RangeError} "size must be a positive integer" / "maxRmsNm must be a finite number > 0" /
 *   "seed must be a safe integer" / "J must be a positive integer"
 * Source: M. E. Muller, "A note on a method for generating points uniformly on n-dimensional spheres",
 * Comm. ACM 2(4), 19-20 (1959); PHYSICS.md section 5.
 */
export function randomDesign(termCountJ: number, options: RandomDesignOptions): Float64Array {
  return randomDirections(termCountJ, options, (random) => Math.pow(random.nextDouble(), 1 / termCountJ));
}

/**
 * Samples for validation across amplitudes: a direction uniform on the sphere (as {@link randomDesign}) and a
 * total RMS uniform in [0, maxRmsNm]. In many dimensions a uniform ball puts nearly every sample close to its
 * surface (for J = 33, 99 % lie above 0.87 maxRmsNm), which would leave the lower RMS bins of the validation
 * statistics empty; uniform amplitudes fill every bin equally.
 *
 * @returns row-major `size x J` coefficients, nm RMS
 * @throws {RangeError} as {@link randomDesign}
 * Source: Muller (1959) for the direction; the radial law is this product's choice for validation.
 */
export function randomAmplitudeDesign(termCountJ: number, options: RandomDesignOptions): Float64Array {
  return randomDirections(termCountJ, options, (random) => random.nextDouble());
}

/** Random directions from normal deviates, scaled to `maxRmsNm * radius(random)`. */
function randomDirections(
  termCountJ: number,
  options: RandomDesignOptions,
  radius: (random: SplitMix64) => number,
): Float64Array {
  const { size, maxRmsNm, seed } = options;
  if (!Number.isInteger(termCountJ) || termCountJ < 1) throw new RangeError("J must be a positive integer");
  if (!Number.isInteger(size) || size < 1) throw new RangeError("size must be a positive integer");
  if (!Number.isFinite(maxRmsNm) || maxRmsNm <= 0) throw new RangeError("maxRmsNm must be a finite number > 0");
  const random = new SplitMix64(seed);
  const out = new Float64Array(size * termCountJ);
  for (let s = 0; s < size; s++) {
    let sumSquares = 0;
    const row = s * termCountJ;
    do {
      sumSquares = 0;
      for (let k = 0; k < termCountJ; k++) {
        const g = random.nextGaussian();
        out[row + k] = g;
        sumSquares += g * g;
      }
    } while (sumSquares === 0);
    const scale = (maxRmsNm * radius(random)) / Math.sqrt(sumSquares);
    for (let k = 0; k < termCountJ; k++) out[row + k] *= scale;
  }
  return out;
}

/** Number of samples of the axes-and-pairs design: `1 + 2J + J(J-1)/2`. */
export function axesAndPairsSize(termCountJ: number): number {
  return 1 + 2 * termCountJ + (termCountJ * (termCountJ - 1)) / 2;
}

/**
 * Step of the axes-and-pairs design for a largest total RMS: the pair samples `(d, d)` are the largest,
 * with RMS `d sqrt(2)`, so `d = maxRmsNm / sqrt(2)` keeps every sample inside the ball.
 * @throws {RangeError} "maxRmsNm must be a finite number > 0"
 */
export function axesAndPairsStepNm(maxRmsNm: number): number {
  if (!Number.isFinite(maxRmsNm) || maxRmsNm <= 0) throw new RangeError("maxRmsNm must be a finite number > 0");
  return maxRmsNm / Math.SQRT2;
}

/**
 * The axes-and-pairs design: the zero wavefront, each term alone at `+d` and at `-d`, and each pair
 * `(i, j)`, `i < j`, at `(d, d)`. For a second-order model it has exactly as many samples as unknowns
 * (`1 + 2J + J(J-1)/2 = 1 + J + J(J+1)/2`), and the system is exactly determined: the constant is the zero
 * sample, `A_i` and `B_ii` follow from the +-d pair, `B_ij` from the (d, d) sample.
 *
 * @param stepNm the step d, nm RMS
 * @returns row-major `S x J` coefficients, nm RMS
 * @throws {RangeError} "J must be a positive integer" / "stepNm must be a finite number > 0"
 * Source: PHYSICS.md section 5 (design), derivation above.
 */
export function axesAndPairsDesign(termCountJ: number, stepNm: number): Float64Array {
  if (!Number.isInteger(termCountJ) || termCountJ < 1) throw new RangeError("J must be a positive integer");
  if (!Number.isFinite(stepNm) || stepNm <= 0) throw new RangeError("stepNm must be a finite number > 0");
  const size = axesAndPairsSize(termCountJ);
  const out = new Float64Array(size * termCountJ);
  let s = 1;
  for (let k = 0; k < termCountJ; k++) {
    out[s++ * termCountJ + k] = stepNm;
    out[s++ * termCountJ + k] = -stepNm;
  }
  for (let a = 0; a < termCountJ; a++) {
    for (let b = a + 1; b < termCountJ; b++) {
      out[s * termCountJ + a] = stepNm;
      out[s * termCountJ + b] = stepNm;
      s++;
    }
  }
  return out;
}

/** Total RMS of each sample, `sqrt(sum_j a_j^2)` (orthonormal Zernike terms), nm. */
export function sampleRmsNm(coefficientsNm: ArrayLike<number>, termCountJ: number): Float64Array {
  const samples = Math.floor(coefficientsNm.length / termCountJ);
  const out = new Float64Array(samples);
  for (let s = 0; s < samples; s++) {
    let sum = 0;
    for (let k = 0; k < termCountJ; k++) {
      const a = coefficientsNm[s * termCountJ + k];
      sum += a * a;
    }
    out[s] = Math.sqrt(sum);
  }
  return out;
}

/** A generating or validation set: coefficients with their exact TTL maps. */
export interface SampleSet {
  /** Row-major `count x J` Zernike coefficients in the model's Noll order, nm RMS. */
  coefficientsNm: Float64Array;
  /** Exact maps, `x[s * M * M + iy * M + ix]`, pm/nrad. */
  x: Float64Array;
  y: Float64Array;
  count: number;
  pointsPerAxis: number;
}

/**
 * Check the shapes and values of a sample set, e.g. one uploaded from outside.
 * @throws {RangeError} "sample set must not be empty" / "coefficient matrix must have count x J entries" /
 *   "maps must have count x M x M entries per axis" / "sample set contains a non-finite coefficient (sample s)" /
 *   "sample set contains a non-finite TTL value (sample s)"
 */
export function checkSampleSet(set: SampleSet, termCountJ: number, pointsPerAxis: number): void {
  const { count } = set;
  if (!Number.isInteger(count) || count < 1) throw new RangeError("sample set must not be empty");
  if (set.coefficientsNm.length !== count * termCountJ) {
    throw new RangeError(`coefficient matrix must have count x J = ${count} x ${termCountJ} entries`);
  }
  const nodes = pointsPerAxis * pointsPerAxis;
  if (set.pointsPerAxis !== pointsPerAxis || set.x.length !== count * nodes || set.y.length !== count * nodes) {
    throw new RangeError(`maps must have count x M x M = ${count} x ${pointsPerAxis} x ${pointsPerAxis} entries per axis`);
  }
  for (let i = 0; i < set.coefficientsNm.length; i++) {
    if (!Number.isFinite(set.coefficientsNm[i])) {
      throw new RangeError(`sample set contains a non-finite coefficient (sample ${Math.floor(i / termCountJ)})`);
    }
  }
  for (let i = 0; i < set.x.length; i++) {
    if (!Number.isFinite(set.x[i]) || !Number.isFinite(set.y[i])) {
      throw new RangeError(`sample set contains a non-finite TTL value (sample ${Math.floor(i / nodes)})`);
    }
  }
}
