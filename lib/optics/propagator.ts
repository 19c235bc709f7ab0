import { requireFiniteCoefficients } from "./checks.ts";
import { foldedKernels, foldedTransform, type FoldedKernels } from "./matrixFourier.ts";
import { phasorsInto } from "./phasor.ts";
import { apertureTransmission, pupilCoordinates } from "./pupil.ts";
import { thetaGridNrad, validateSetup } from "./setup.ts";
import type { OpticalSetup } from "./types.ts";
import { ZernikeTerm } from "./zernike.ts";

/** 1 m/rad of optical path per pointing angle is 1e3 pm/nrad. */
const PM_PER_NRAD_PER_M_PER_RAD = 1e3;

/**
 * A node whose |E| is below this fraction of `sum |U|` (the largest |E| any phase can give) is a
 * far-field null: the rounding of the sums (about 1e-16 sqrt(N) of `sum |U|`) is then as large as
 * E itself, so its phase, and the TTL, are undefined (PHYSICS.md section 2).
 */
export const NULL_FIELD_RELATIVE = 1e-13;

/** The four mirrored members of a pupil sample: (+x, +y), (-x, +y), (+x, -y), (-x, -y). */
const QUADRANTS = 4;
/** Sign of x and of y in each quadrant, in the order above. */
const SIGN_X = [1, -1, 1, -1] as const;
const SIGN_Y = [1, 1, -1, -1] as const;

/**
 * Exact far-field tilt-to-length coupling of a clipped Gaussian beam with wavefront error.
 *
 * Pupil field `U = T exp(-r^2 / w^2) exp(i k W) exp(i k r^2 / (2L))` on a cell-centred grid,
 * far field `E = K U K^T` with `K[p][n] = exp(-i k theta_p x_n)`, and the angular
 * derivatives analytically, `dE/dtheta_x = -i k K U (K x)^T`, so that
 * `c_x = Im(conj(E) dE/dtheta_x) / (k |E|^2) = -Re(conj(E) E_x) / |E|^2` with `E_x = K U (K x)^T`.
 * Conventions: PHYSICS.md sections 1-3. Everything that does not depend on the
 * wavefront (Zernike basis, amplitude, kernels) is computed once here.
 *
 * Pupil samples are kept by quadrant: the basis is stored for x, y >= 0 only, and
 * each term's parity in x and in y gives its values in the other three quadrants.
 */
export class TtlPropagator {
  readonly setup: OpticalSetup;
  readonly nollIndices: Int32Array;
  readonly pointsPerAxis: number;
  readonly thetaNrad: Float64Array;
  readonly waveNumberPerM: number;

  private readonly samples: number;
  /** Mirrored pairs per axis, ceil(N / 2); pair q holds +x at index N - pairs + q, -x at pairs - 1 - q. */
  private readonly pairs: number;
  /** Pairs of row pair r that touch the aperture. */
  private readonly rowPairs: Int32Array;
  /** Offset of row pair r in the quarter-pupil arrays. */
  private readonly rowOffset: Int32Array;
  private readonly quarterCells: number;
  /** T exp(-r^2/w^2) per quadrant, [quadrant][cell]; zero where a member duplicates the centre row or column. */
  private readonly amplitude: Float64Array;
  private readonly fresnelPhase: Float64Array;
  /** Phase per nm of each term in the first quadrant, [term][cell]. */
  private readonly basis: Float64Array;
  /** Parity class of each term: bit 0 set when odd in x, bit 1 when odd in y. */
  private readonly parityClass: Uint8Array;
  private readonly kernels: FoldedKernels;
  /** |E|^2 at or below which a node is a null: (NULL_FIELD_RELATIVE sum |U|)^2. */
  private readonly nullIntensity: number;

  // Work buffers, reused by every call (one propagator per thread).
  /** Phase sums per parity class, [class][cell]. */
  private readonly classPhase: Float64Array;
  private readonly phase: Float64Array;
  private readonly uRe: Float64Array;
  private readonly uIm: Float64Array;
  private readonly foldPRe: Float64Array;
  private readonly foldPIm: Float64Array;
  private readonly foldQRe: Float64Array;
  private readonly foldQIm: Float64Array;
  private readonly gRe: Float64Array;
  private readonly gIm: Float64Array;
  private readonly gxRe: Float64Array;
  private readonly gxIm: Float64Array;
  private readonly eRe: Float64Array;
  private readonly eIm: Float64Array;
  private readonly exRe: Float64Array;
  private readonly exIm: Float64Array;
  private readonly eyRe: Float64Array;
  private readonly eyIm: Float64Array;

  /**
   * @param setup optical setup (validated here)
   * @param nollIndices the terms whose coefficients {@link ttlInto} takes, in that order
   * @throws TypeError / RangeError for an invalid setup or Noll index (see validateSetup).
   */
  constructor(setup: OpticalSetup, nollIndices: ArrayLike<number>) {
    this.setup = validateSetup(setup);
    const terms = Array.from(nollIndices, (j) => new ZernikeTerm(j));
    this.nollIndices = Int32Array.from(nollIndices);
    const { wavelengthNm, apertureDiameterM, beamRadiusM, distanceM, farField, pupilSamples: n } = this.setup;
    const k = (2 * Math.PI) / (wavelengthNm * 1e-9);
    this.waveNumberPerM = k;
    this.samples = n;
    this.pointsPerAxis = farField.pointsPerAxis;
    this.thetaNrad = thetaGridNrad(farField);

    const radius = apertureDiameterM / 2;
    const x = pupilCoordinates(radius, n);
    const transmission = apertureTransmission(radius, n);
    const pairs = Math.ceil(n / 2);
    this.pairs = pairs;
    const plus = (q: number) => n - pairs + q;
    const minus = (q: number) => pairs - 1 - q; // equals plus(0) at an odd grid's centre
    const xPair = Float64Array.from({ length: pairs }, (_, q) => x[plus(q)]);

    this.rowPairs = new Int32Array(pairs);
    this.rowOffset = new Int32Array(pairs + 1);
    for (let r = 0; r < pairs; r++) {
      let count = 0;
      for (let q = 0; q < pairs; q++) if (transmission[plus(r) * n + plus(q)] > 0) count = q + 1;
      this.rowPairs[r] = count;
      this.rowOffset[r + 1] = this.rowOffset[r] + count;
    }
    const cells = this.rowOffset[pairs];
    this.quarterCells = cells;
    this.amplitude = new Float64Array(QUADRANTS * cells);
    this.fresnelPhase = new Float64Array(cells);
    this.basis = new Float64Array(terms.length * cells);
    this.parityClass = Uint8Array.from(terms, (t) => {
      // x -> -x maps phi to pi - phi: cos(m phi) keeps its sign for even m, sin(|m| phi) for odd |m|.
      // y -> -y maps phi to -phi: cos terms are even, sin terms odd.
      const oddInX = t.m >= 0 ? Math.abs(t.m) % 2 === 1 : Math.abs(t.m) % 2 === 0;
      const oddInY = t.m < 0;
      return (oddInX ? 1 : 0) | (oddInY ? 2 : 0);
    });
    const phasePerNm = k * 1e-9;
    for (let r = 0; r < pairs; r++) {
      const y = x[plus(r)];
      for (let q = 0; q < this.rowPairs[r]; q++) {
        const cell = this.rowOffset[r] + q;
        const r2 = xPair[q] * xPair[q] + y * y;
        const gaussian = Math.exp(-r2 / (beamRadiusM * beamRadiusM));
        for (let quadrant = 0; quadrant < QUADRANTS; quadrant++) {
          const ix = SIGN_X[quadrant] > 0 ? plus(q) : minus(q);
          const iy = SIGN_Y[quadrant] > 0 ? plus(r) : minus(r);
          const duplicate = (SIGN_X[quadrant] < 0 && ix === plus(q)) || (SIGN_Y[quadrant] < 0 && iy === plus(r));
          this.amplitude[quadrant * cells + cell] = duplicate ? 0 : transmission[iy * n + ix] * gaussian;
        }
        this.fresnelPhase[cell] = (k * r2) / (2 * distanceM);
        // A partly covered edge cell whose centre lies outside the disc takes the rim value
        // (PHYSICS.md section 2): the polynomials mean nothing beyond rho = 1.
        const rho = Math.min(Math.sqrt(r2) / radius, 1);
        const phi = Math.atan2(y, xPair[q]);
        for (let t = 0; t < terms.length; t++) this.basis[t * cells + cell] = phasePerNm * terms[t].at(rho, phi);
      }
    }

    let amplitudeSum = 0;
    for (let i = 0; i < this.amplitude.length; i++) amplitudeSum += this.amplitude[i];
    this.nullIntensity = (NULL_FIELD_RELATIVE * amplitudeSum) ** 2;

    const thetaRad = this.thetaNrad.map((v) => v * 1e-9);
    this.kernels = foldedKernels(k, thetaRad, xPair);

    const m = this.pointsPerAxis;
    this.classPhase = new Float64Array(QUADRANTS * cells);
    this.phase = new Float64Array(QUADRANTS * cells);
    this.uRe = new Float64Array(QUADRANTS * cells);
    this.uIm = new Float64Array(QUADRANTS * cells);
    this.foldPRe = new Float64Array(pairs);
    this.foldPIm = new Float64Array(pairs);
    this.foldQRe = new Float64Array(pairs);
    this.foldQIm = new Float64Array(pairs);
    this.gRe = new Float64Array(m * n);
    this.gIm = new Float64Array(m * n);
    this.gxRe = new Float64Array(m * n);
    this.gxIm = new Float64Array(m * n);
    this.eRe = new Float64Array(m * m);
    this.eIm = new Float64Array(m * m);
    this.exRe = new Float64Array(m * m);
    this.exIm = new Float64Array(m * m);
    this.eyRe = new Float64Array(m * m);
    this.eyIm = new Float64Array(m * m);
  }

  /** Number of far-field nodes per map, M^2. */
  get nodeCount(): number {
    return this.pointsPerAxis * this.pointsPerAxis;
  }

  /**
   * TTL maps of one wavefront: `c_x(theta)`, `c_y(theta)` in pm/nrad, written row-major
   * (`iy * M + ix`) into `outX`/`outY` from `outOffset`. A node where the field vanishes
   * (see {@link NULL_FIELD_RELATIVE}) gets 0 in both maps and its index (`outOffset + iy * M + ix`)
   * is pushed onto `undefinedNodes`.
   * @param coefficientsNm RMS coefficients in nm, in the order of `nollIndices`
   * @param undefinedNodes receives the indices of undefined nodes (omit to drop them)
   * @returns the number of undefined nodes in this map (0 in every ordinary case)
   * @throws RangeError when the coefficient count is wrong or a coefficient is not finite.
   */
  ttlInto(
    coefficientsNm: ArrayLike<number>, outX: Float64Array, outY: Float64Array, outOffset = 0, undefinedNodes?: number[],
  ): number {
    this.checkCoefficients(coefficientsNm);
    this.pupilField(coefficientsNm);
    this.farField();
    const { eRe, eIm, exRe, exIm, eyRe, eyIm } = this;
    const field = { eRe, eIm, exRe, exIm, eyRe, eyIm };
    return ttlFromFieldInto(field, this.nodeCount, this.nullIntensity, outX, outY, outOffset, undefinedNodes);
  }

  /**
   * Far-field amplitude `E(theta)` itself (arbitrary common scale), row-major `iy * M + ix`:
   * for intensity checks such as the Airy pattern.
   * @throws RangeError as {@link ttlInto}.
   */
  fieldInto(coefficientsNm: ArrayLike<number>, outRe: Float64Array, outIm: Float64Array): void {
    this.checkCoefficients(coefficientsNm);
    this.pupilField(coefficientsNm);
    this.farField();
    outRe.set(this.eRe);
    outIm.set(this.eIm);
  }

  /** TTL maps of one wavefront as new arrays, with the indices of undefined nodes; see {@link ttlInto}. */
  ttl(coefficientsNm: ArrayLike<number>): { x: Float64Array; y: Float64Array; undefinedNodes: number[] } {
    const x = new Float64Array(this.nodeCount);
    const y = new Float64Array(this.nodeCount);
    const undefinedNodes: number[] = [];
    this.ttlInto(coefficientsNm, x, y, 0, undefinedNodes);
    return { x, y, undefinedNodes };
  }

  private checkCoefficients(coefficientsNm: ArrayLike<number>): void {
    requireFiniteCoefficients(coefficientsNm, this.nollIndices);
  }

  /** Pupil field in all four quadrants: amplitude times exp(i (Fresnel + k W)). */
  private pupilField(coefficientsNm: ArrayLike<number>): void {
    const cells = this.quarterCells;
    const { classPhase, phase, basis, parityClass, fresnelPhase } = this;
    classPhase.fill(0);
    classPhase.set(fresnelPhase); // the Fresnel phase is even in x and y: class 0
    for (let t = 0; t < parityClass.length; t++) {
      const a = coefficientsNm[t];
      if (a === 0) continue;
      const target = parityClass[t] * cells;
      const base = t * cells;
      for (let i = 0; i < cells; i++) classPhase[target + i] += a * basis[base + i];
    }
    const oddX = cells, oddY = 2 * cells, oddXY = 3 * cells;
    for (let i = 0; i < cells; i++) {
      const even = classPhase[i], ox = classPhase[oddX + i], oy = classPhase[oddY + i], oxy = classPhase[oddXY + i];
      phase[i] = even + ox + oy + oxy; // (+x, +y)
      phase[cells + i] = even - ox + oy - oxy; // (-x, +y)
      phase[2 * cells + i] = even + ox - oy - oxy; // (+x, -y)
      phase[3 * cells + i] = even - ox - oy + oxy; // (-x, -y)
    }
    phasorsInto(this.amplitude, phase, this.uRe, this.uIm, QUADRANTS * cells);
  }

  /** Two folded transform stages: rows (x) then columns (y), with the moments for the derivatives. */
  private farField(): void {
    const n = this.samples;
    const m = this.pointsPerAxis;
    const pairs = this.pairs;
    const cells = this.quarterCells;
    const { kernels, foldPRe, foldPIm, foldQRe, foldQIm, gRe, gIm, gxRe, gxIm, uRe, uIm } = this;
    // Stage 1: G[p][iy] = sum_ix U[iy][ix] K[p][ix], Gx the same with x_ix (stored transposed).
    for (let r = 0; r < pairs; r++) {
      const count = this.rowPairs[r];
      const base = this.rowOffset[r];
      for (let half = 0; half < 2; half++) {
        const iy = half === 0 ? n - pairs + r : pairs - 1 - r;
        if (half === 1 && iy === n - pairs + r) break; // an odd grid's centre row is done once
        const right = (2 * half) * cells + base;
        const left = right + cells;
        for (let q = 0; q < count; q++) {
          foldPRe[q] = uRe[right + q] + uRe[left + q];
          foldPIm[q] = uIm[right + q] + uIm[left + q];
          foldQRe[q] = uRe[right + q] - uRe[left + q];
          foldQIm[q] = uIm[right + q] - uIm[left + q];
        }
        foldedTransform(kernels, count, foldPRe, foldPIm, foldQRe, foldQIm, gRe, gIm, gxRe, gxIm, n, iy);
      }
    }
    // Stage 2, per far-field column px: E = sum_iy K[py][iy] G[px][iy], E_y with y_iy, E_x from Gx.
    const { eRe, eIm, exRe, exIm, eyRe, eyIm } = this;
    for (let px = 0; px < m; px++) {
      const line = px * n;
      this.foldLine(gRe, gIm, line, n, pairs);
      foldedTransform(kernels, pairs, foldPRe, foldPIm, foldQRe, foldQIm, eRe, eIm, eyRe, eyIm, m, px);
      this.foldLine(gxRe, gxIm, line, n, pairs);
      foldedTransform(kernels, pairs, foldPRe, foldPIm, foldQRe, foldQIm, exRe, exIm, null, null, m, px);
    }
  }

  /** Even/odd parts of one column line[0 .. n-1] over its mirrored pairs (the centre pairs with zero). */
  private foldLine(re: Float64Array, im: Float64Array, line: number, n: number, pairs: number): void {
    const { foldPRe, foldPIm, foldQRe, foldQIm } = this;
    for (let q = 0; q < pairs; q++) {
      const r = line + n - pairs + q;
      const l = line + pairs - 1 - q;
      const lRe = r === l ? 0 : re[l];
      const lIm = r === l ? 0 : im[l];
      foldPRe[q] = re[r] + lRe;
      foldPIm[q] = im[r] + lIm;
      foldQRe[q] = re[r] - lRe;
      foldQIm[q] = im[r] - lIm;
    }
  }
}

/** The far field at M^2 nodes: E, and the moments E_x, E_y of the angular derivatives. */
export interface FarFieldMoments {
  eRe: Float64Array;
  eIm: Float64Array;
  exRe: Float64Array;
  exIm: Float64Array;
  eyRe: Float64Array;
  eyIm: Float64Array;
}

/**
 * TTL from the far field: `c_x = -Re(conj(E) E_x) / |E|^2` (likewise c_y), times 1e3 for pm/nrad
 * (PHYSICS.md section 3). Where `|E|^2 <= nullIntensity` the phase of E, and so the TTL, is
 * undefined (PHYSICS.md section 2): both outputs get 0 and the node index is pushed onto
 * `undefinedNodes`, so that no NaN or infinity ever leaves.
 * @returns the number of undefined nodes
 */
export function ttlFromFieldInto(
  field: FarFieldMoments, nodes: number, nullIntensity: number,
  outX: Float64Array, outY: Float64Array, outOffset = 0, undefinedNodes?: number[],
): number {
  const { eRe, eIm, exRe, exIm, eyRe, eyIm } = field;
  let nulls = 0;
  for (let i = 0; i < nodes; i++) {
    const intensity = eRe[i] * eRe[i] + eIm[i] * eIm[i];
    if (!(intensity > nullIntensity)) {
      outX[outOffset + i] = 0;
      outY[outOffset + i] = 0;
      undefinedNodes?.push(outOffset + i);
      nulls++;
      continue;
    }
    const scale = -PM_PER_NRAD_PER_M_PER_RAD / intensity;
    outX[outOffset + i] = scale * (eRe[i] * exRe[i] + eIm[i] * exIm[i]);
    outY[outOffset + i] = scale * (eRe[i] * eyRe[i] + eIm[i] * eyIm[i]);
  }
  return nulls;
}
