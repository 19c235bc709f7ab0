import { foldedKernels, foldedTransform, type FoldedKernels } from "./matrixFourier.ts";
import { apertureTransmission, pupilCoordinates } from "./pupil.ts";
import { thetaGridNrad, validateSetup } from "./setup.ts";
import type { OpticalSetup } from "./types.ts";
import { ZernikeTerm } from "./zernike.ts";

/** 1 m/rad of optical path per pointing angle is 1e3 pm/nrad. */
const PM_PER_NRAD_PER_M_PER_RAD = 1e3;

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
 * Pupil samples are stored by mirrored pairs (x, -x) of each row: the right half
 * holds the basis, the left half follows from each term's parity in x.
 */
export class TtlPropagator {
  readonly setup: OpticalSetup;
  readonly nollIndices: Int32Array;
  readonly pointsPerAxis: number;
  readonly thetaNrad: Float64Array;
  readonly waveNumberPerM: number;

  private readonly samples: number;
  private readonly pairs: number;
  /** Pairs of row iy that touch the aperture: q < rowPairs[iy]. */
  private readonly rowPairs: Int32Array;
  /** Offset of row iy in the packed per-pair arrays. */
  private readonly rowOffset: Int32Array;
  private readonly cellCount: number;
  private readonly ampRight: Float64Array;
  private readonly ampLeft: Float64Array;
  private readonly fresnelPhase: Float64Array;
  /** Phase per nm of each term at the right-hand cell of each pair, [term][cell]. */
  private readonly basis: Float64Array;
  /** +1 when a term is even in x (Z(-x, y) = Z(x, y)), -1 when odd. */
  private readonly parity: Int8Array;
  private readonly kernels: FoldedKernels;

  // Work buffers, reused by every call (one propagator per thread).
  private readonly evenPhase: Float64Array;
  private readonly oddPhase: Float64Array;
  private readonly uRightRe: Float64Array;
  private readonly uRightIm: Float64Array;
  private readonly uLeftRe: Float64Array;
  private readonly uLeftIm: Float64Array;
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
    const right = (q: number) => n - pairs + q; // index of the +x member of pair q
    const left = (q: number) => pairs - 1 - q; // index of the -x member (the same cell at an odd grid's centre)
    const xPair = Float64Array.from({ length: pairs }, (_, q) => x[right(q)]);

    this.rowPairs = new Int32Array(n);
    this.rowOffset = new Int32Array(n + 1);
    for (let iy = 0; iy < n; iy++) {
      let count = 0;
      for (let q = 0; q < pairs; q++) if (transmission[iy * n + right(q)] > 0) count = q + 1;
      this.rowPairs[iy] = count;
      this.rowOffset[iy + 1] = this.rowOffset[iy] + count;
    }
    const cells = this.rowOffset[n];
    this.cellCount = cells;
    this.ampRight = new Float64Array(cells);
    this.ampLeft = new Float64Array(cells);
    this.fresnelPhase = new Float64Array(cells);
    this.basis = new Float64Array(terms.length * cells);
    this.parity = Int8Array.from(terms, (t) => ((t.m >= 0) === (t.m % 2 === 0) ? 1 : -1));
    const phasePerNm = k * 1e-9;
    for (let iy = 0; iy < n; iy++) {
      for (let q = 0; q < this.rowPairs[iy]; q++) {
        const cell = this.rowOffset[iy] + q;
        const r2 = xPair[q] * xPair[q] + x[iy] * x[iy];
        const gaussian = Math.exp(-r2 / (beamRadiusM * beamRadiusM));
        this.ampRight[cell] = transmission[iy * n + right(q)] * gaussian;
        this.ampLeft[cell] = right(q) === left(q) ? 0 : transmission[iy * n + left(q)] * gaussian;
        this.fresnelPhase[cell] = (k * r2) / (2 * distanceM);
        const rho = Math.sqrt(r2) / radius;
        const phi = Math.atan2(x[iy], xPair[q]);
        for (let t = 0; t < terms.length; t++) this.basis[t * cells + cell] = phasePerNm * terms[t].at(rho, phi);
      }
    }

    const thetaRad = this.thetaNrad.map((v) => v * 1e-9);
    this.kernels = foldedKernels(k, thetaRad, xPair);

    const m = this.pointsPerAxis;
    this.evenPhase = new Float64Array(cells);
    this.oddPhase = new Float64Array(cells);
    this.uRightRe = new Float64Array(cells);
    this.uRightIm = new Float64Array(cells);
    this.uLeftRe = new Float64Array(cells);
    this.uLeftIm = new Float64Array(cells);
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
   * (`iy * M + ix`) into `outX`/`outY` from `outOffset`.
   * @param coefficientsNm RMS coefficients in nm, in the order of `nollIndices`
   * @throws RangeError when the coefficient count is wrong or a coefficient is not finite.
   */
  ttlInto(coefficientsNm: ArrayLike<number>, outX: Float64Array, outY: Float64Array, outOffset = 0): void {
    const terms = this.nollIndices.length;
    if (coefficientsNm.length !== terms) {
      throw new RangeError(`expected ${terms} coefficients, got ${coefficientsNm.length}`);
    }
    for (let t = 0; t < terms; t++) {
      if (!Number.isFinite(coefficientsNm[t])) {
        throw new RangeError(`coefficient of Noll term ${this.nollIndices[t]} must be a finite number`);
      }
    }
    this.pupilField(coefficientsNm);
    this.farField();
    const nodes = this.nodeCount;
    const { eRe, eIm, exRe, exIm, eyRe, eyIm } = this;
    for (let i = 0; i < nodes; i++) {
      const intensity = eRe[i] * eRe[i] + eIm[i] * eIm[i];
      const scale = -PM_PER_NRAD_PER_M_PER_RAD / intensity;
      outX[outOffset + i] = scale * (eRe[i] * exRe[i] + eIm[i] * exIm[i]);
      outY[outOffset + i] = scale * (eRe[i] * eyRe[i] + eIm[i] * eyIm[i]);
    }
  }

  /** TTL maps of one wavefront as new arrays; see {@link ttlInto}. */
  ttl(coefficientsNm: ArrayLike<number>): { x: Float64Array; y: Float64Array } {
    const x = new Float64Array(this.nodeCount);
    const y = new Float64Array(this.nodeCount);
    this.ttlInto(coefficientsNm, x, y);
    return { x, y };
  }

  /** Pupil field at both members of every pair: amplitude times exp(i (Fresnel + k W)). */
  private pupilField(coefficientsNm: ArrayLike<number>): void {
    const cells = this.cellCount;
    const { evenPhase, oddPhase, basis, parity, fresnelPhase } = this;
    evenPhase.set(fresnelPhase);
    oddPhase.fill(0);
    for (let t = 0; t < parity.length; t++) {
      const a = coefficientsNm[t];
      if (a === 0) continue;
      const target = parity[t] > 0 ? evenPhase : oddPhase;
      const base = t * cells;
      for (let i = 0; i < cells; i++) target[i] += a * basis[base + i];
    }
    const { ampRight, ampLeft, uRightRe, uRightIm, uLeftRe, uLeftIm } = this;
    for (let i = 0; i < cells; i++) {
      const right = evenPhase[i] + oddPhase[i];
      const left = evenPhase[i] - oddPhase[i];
      uRightRe[i] = ampRight[i] * Math.cos(right);
      uRightIm[i] = ampRight[i] * Math.sin(right);
      uLeftRe[i] = ampLeft[i] * Math.cos(left);
      uLeftIm[i] = ampLeft[i] * Math.sin(left);
    }
  }

  /** Two folded transform stages: rows (x) then columns (y), with the moments for the derivatives. */
  private farField(): void {
    const n = this.samples;
    const m = this.pointsPerAxis;
    const { kernels, foldPRe, foldPIm, foldQRe, foldQIm, gRe, gIm, gxRe, gxIm } = this;
    const { uRightRe, uRightIm, uLeftRe, uLeftIm } = this;
    // Stage 1: G[p][iy] = sum_ix U[iy][ix] K[p][ix], Gx the same with x_ix (stored transposed).
    for (let iy = 0; iy < n; iy++) {
      const count = this.rowPairs[iy];
      const base = this.rowOffset[iy];
      for (let q = 0; q < count; q++) {
        const i = base + q;
        foldPRe[q] = uRightRe[i] + uLeftRe[i];
        foldPIm[q] = uRightIm[i] + uLeftIm[i];
        foldQRe[q] = uRightRe[i] - uLeftRe[i];
        foldQIm[q] = uRightIm[i] - uLeftIm[i];
      }
      foldedTransform(kernels, count, foldPRe, foldPIm, foldQRe, foldQIm, gRe, gIm, gxRe, gxIm, n, iy);
    }
    // Stage 2, per far-field column px: E = sum_iy K[py][iy] G[px][iy], E_y with y_iy, E_x from Gx.
    const pairs = this.pairs;
    const { eRe, eIm, exRe, exIm, eyRe, eyIm } = this;
    for (let px = 0; px < m; px++) {
      const line = px * n;
      this.foldLine(gRe, gIm, line, n, pairs);
      foldedTransform(kernels, pairs, foldPRe, foldPIm, foldQRe, foldQIm, eRe, eIm, eyRe, eyIm, m, px);
      this.foldLine(gxRe, gxIm, line, n, pairs);
      foldedTransform(kernels, pairs, foldPRe, foldPIm, foldQRe, foldQIm, exRe, exIm, null, null, m, px);
    }
  }

  /** Even/odd parts of one column line[0 .. n-1] over its mirrored pairs (centre pairs with zero). */
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
