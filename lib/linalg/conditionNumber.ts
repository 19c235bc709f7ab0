import { kernelInstance } from "../kernels/instance.ts";
import type { HouseholderQr } from "./householderQr.ts";

/**
 * 2-norm condition number of the factored matrix, `kappa = sigma_max / sigma_min` of R (equal to that of A,
 * since Q is orthogonal). sigma_max^2 comes from the power method on `R^T R`, sigma_min^-2 from the power method
 * on `(R^T R)^-1` (two triangular solves per step); both iterate until the Rayleigh quotient changes by less
 * than `1e-10` relative, at most `maxIterations` times. Returns `Infinity` when R has a zero diagonal entry.
 *
 * @param qr factorisation from `householderQr`
 * @param maxIterations upper bound on power-method steps for each end of the spectrum
 * @throws {RangeError} "maxIterations must be a positive integer"
 * The iterations run in the float64 SIMD kernel of `lib/kernels` where WebAssembly is available, else in
 * {@link conditionNumberReference}.
 * Source: Golub and Van Loan, Matrix Computations, 4th ed., section 8.2.1 (power method) and
 * section 3.5.4 (condition estimation via the triangular factor).
 */
export function conditionNumber(qr: HouseholderQr, maxIterations = 300): number {
  if (!Number.isInteger(maxIterations) || maxIterations < 1) {
    throw new RangeError("maxIterations must be a positive integer");
  }
  const { rows, cols: n, factors } = qr;
  for (let k = 0; k < n; k++) if (factors[k * rows + k] === 0) return Infinity;
  const kernels = kernelInstance();
  if (!kernels) return conditionNumberReference(qr, maxIterations);
  kernels.begin();
  const rr = kernels.scratch(n * n * 8);
  const work = kernels.scratch(3 * n * 8);
  const heap = kernels.f64;
  const base = rr >> 3;
  heap.fill(0, base, base + n * n);
  for (let i = 0; i < n; i++) for (let j = i; j < n; j++) heap[base + i * n + j] = factors[j * rows + i];
  const sigmaMaxSquared = kernels.exports.dominantEigenvalue(rr, n, 0, maxIterations, work);
  const sigmaMinInverseSquared = kernels.exports.dominantEigenvalue(rr, n, 1, maxIterations, work);
  return Math.sqrt(sigmaMaxSquared * sigmaMinInverseSquared);
}

/** The TypeScript reference of {@link conditionNumber}: same arguments, checks and iterations. */
export function conditionNumberReference(qr: HouseholderQr, maxIterations = 300): number {
  if (!Number.isInteger(maxIterations) || maxIterations < 1) {
    throw new RangeError("maxIterations must be a positive integer");
  }
  const { rows, cols: n, factors } = qr;
  for (let k = 0; k < n; k++) if (factors[k * rows + k] === 0) return Infinity;
  const r = (i: number, j: number) => factors[j * rows + i];
  // R stored row-major for contiguous access in the solves.
  const rr = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = i; j < n; j++) rr[i * n + j] = r(i, j);

  const multiplyRtR = (x: Float64Array, out: Float64Array, tmp: Float64Array) => {
    for (let i = 0; i < n; i++) {
      let s = 0;
      for (let j = i; j < n; j++) s += rr[i * n + j] * x[j];
      tmp[i] = s;
    }
    out.fill(0);
    for (let i = 0; i < n; i++) {
      const ti = tmp[i];
      for (let j = i; j < n; j++) out[j] += rr[i * n + j] * ti;
    }
  };
  const solveRtR = (x: Float64Array, out: Float64Array, tmp: Float64Array) => {
    // R^T tmp = x (forward), then R out = tmp (backward).
    tmp.set(x);
    for (let i = 0; i < n; i++) {
      const ti = tmp[i] / rr[i * n + i];
      tmp[i] = ti;
      for (let j = i + 1; j < n; j++) tmp[j] -= rr[i * n + j] * ti;
    }
    for (let i = n - 1; i >= 0; i--) {
      let s = tmp[i];
      for (let j = i + 1; j < n; j++) s -= rr[i * n + j] * out[j];
      out[i] = s / rr[i * n + i];
    }
  };
  const dominant = (apply: (x: Float64Array, out: Float64Array, tmp: Float64Array) => void) => {
    let x = new Float64Array(n);
    let y = new Float64Array(n);
    const tmp = new Float64Array(n);
    // A fixed, non-symmetric start vector keeps the result reproducible.
    for (let i = 0; i < n; i++) x[i] = 1 + ((i * 7919) % 101) / 101;
    normalise(x);
    let lambda = 0;
    for (let it = 0; it < maxIterations; it++) {
      apply(x, y, tmp);
      let dot = 0;
      for (let i = 0; i < n; i++) dot += x[i] * y[i];
      const norm = normalise(y);
      if (norm === 0 || !Number.isFinite(norm)) return norm;
      const previous = lambda;
      lambda = dot;
      [x, y] = [y, x];
      if (it > 2 && Math.abs(lambda - previous) <= 1e-10 * Math.abs(lambda)) break;
    }
    return lambda;
  };
  const sigmaMaxSquared = dominant(multiplyRtR);
  const sigmaMinInverseSquared = dominant(solveRtR);
  return Math.sqrt(sigmaMaxSquared * sigmaMinInverseSquared);
}

function normalise(x: Float64Array): number {
  let s = 0;
  for (let i = 0; i < x.length; i++) s += x[i] * x[i];
  const norm = Math.sqrt(s);
  if (norm > 0) for (let i = 0; i < x.length; i++) x[i] /= norm;
  return norm;
}
