/**
 * Work space of {@link symmetricEigenInto} for matrices of one size, reused across calls (no allocation per matrix).
 */
export interface SymmetricEigenWork {
  n: number;
  /** Eigenvectors, row k = eigenvector of `values[k]` (unit 2-norm). */
  vectors: Float64Array;
  /** Eigenvalues, ascending. */
  values: Float64Array;
  offDiagonal: Float64Array;
}

/** Work space for n x n matrices. @throws {RangeError} "n must be a positive integer" */
export function symmetricEigenWork(n: number): SymmetricEigenWork {
  if (!Number.isInteger(n) || n < 1) throw new RangeError("n must be a positive integer");
  return { n, vectors: new Float64Array(n * n), values: new Float64Array(n), offDiagonal: new Float64Array(n) };
}

/**
 * Eigen-decomposition of a real symmetric matrix, `S = Q diag(values) Q^T`: Householder reduction to tridiagonal
 * form, then the implicit QL iteration with Wilkinson shifts, accumulating the transformations (EISPACK `tred2` and
 * `tql2`, as in the public-domain JAMA package and ml-matrix's `EigenvalueDecomposition`, here on one flat array so
 * that a thousand 33 x 33 matrices take milliseconds, not seconds). Eigenvalues come out ascending, each eigenvector
 * as a row of `work.vectors`; the residual `||S q - lambda q||` is of the order of `n eps ||S||`.
 *
 * @param matrix row-major `n x n`, symmetric (only the lower triangle is read), not modified
 * @param work from {@link symmetricEigenWork}(n); `values` and `vectors` are overwritten
 * @throws {RangeError} "matrix must have n x n entries"
 * Source: J. H. Wilkinson and C. Reinsch, Handbook for Automatic Computation, Vol. II, Linear Algebra (1971),
 * contributions II/2 (tred2) and II/3 (tql2); G. H. Golub and C. F. Van Loan, Matrix Computations, 4th ed., 8.3.
 */
export function symmetricEigenInto(matrix: ArrayLike<number>, work: SymmetricEigenWork): void {
  const { n, vectors: v, values: d, offDiagonal: e } = work;
  if (matrix.length !== n * n) throw new RangeError("matrix must have n x n entries");
  // v holds V transposed (v[r * n + c] = V(c, r)), so that the hot loops run along rows.
  for (let i = 0; i < n; i++) for (let j = 0; j <= i; j++) {
    const value = matrix[i * n + j];
    v[j * n + i] = value;
    v[i * n + j] = value;
  }
  if (n === 1) {
    d[0] = v[0];
    v[0] = 1;
    return;
  }
  tred2(n, e, d, v);
  tql2(n, e, d, v);
}

function tred2(n: number, e: Float64Array, d: Float64Array, v: Float64Array): void {
  for (let j = 0; j < n; j++) d[j] = v[j * n + n - 1];
  for (let i = n - 1; i > 0; i--) {
    let scale = 0;
    let h = 0;
    for (let k = 0; k < i; k++) scale += Math.abs(d[k]);
    if (scale === 0) {
      e[i] = d[i - 1];
      for (let j = 0; j < i; j++) {
        d[j] = v[j * n + i - 1];
        v[j * n + i] = 0;
        v[i * n + j] = 0;
      }
    } else {
      for (let k = 0; k < i; k++) {
        d[k] /= scale;
        h += d[k] * d[k];
      }
      let f = d[i - 1];
      let g = Math.sqrt(h);
      if (f > 0) g = -g;
      e[i] = scale * g;
      h -= f * g;
      d[i - 1] = f - g;
      for (let j = 0; j < i; j++) e[j] = 0;
      for (let j = 0; j < i; j++) {
        f = d[j];
        v[i * n + j] = f;
        g = e[j] + v[j * n + j] * f;
        const row = j * n;
        for (let k = j + 1; k <= i - 1; k++) {
          g += v[row + k] * d[k];
          e[k] += v[row + k] * f;
        }
        e[j] = g;
      }
      f = 0;
      for (let j = 0; j < i; j++) {
        e[j] /= h;
        f += e[j] * d[j];
      }
      const hh = f / (h + h);
      for (let j = 0; j < i; j++) e[j] -= hh * d[j];
      for (let j = 0; j < i; j++) {
        f = d[j];
        g = e[j];
        const row = j * n;
        for (let k = j; k <= i - 1; k++) v[row + k] -= f * e[k] + g * d[k];
        d[j] = v[row + i - 1];
        v[row + i] = 0;
      }
    }
    d[i] = h;
  }
  for (let i = 0; i < n - 1; i++) {
    v[i * n + n - 1] = v[i * n + i];
    v[i * n + i] = 1;
    const h = d[i + 1];
    const next = (i + 1) * n;
    if (h !== 0) {
      for (let k = 0; k <= i; k++) d[k] = v[next + k] / h;
      for (let j = 0; j <= i; j++) {
        let g = 0;
        const row = j * n;
        for (let k = 0; k <= i; k++) g += v[next + k] * v[row + k];
        for (let k = 0; k <= i; k++) v[row + k] -= g * d[k];
      }
    }
    for (let k = 0; k <= i; k++) v[next + k] = 0;
  }
  for (let j = 0; j < n; j++) {
    d[j] = v[j * n + n - 1];
    v[j * n + n - 1] = 0;
  }
  v[(n - 1) * n + n - 1] = 1;
  e[0] = 0;
}

function hypotenuse(a: number, b: number): number {
  if (Math.abs(a) > Math.abs(b)) {
    const r = b / a;
    return Math.abs(a) * Math.sqrt(1 + r * r);
  }
  if (b !== 0) {
    const r = a / b;
    return Math.abs(b) * Math.sqrt(1 + r * r);
  }
  return 0;
}

function tql2(n: number, e: Float64Array, d: Float64Array, v: Float64Array): void {
  for (let i = 1; i < n; i++) e[i - 1] = e[i];
  e[n - 1] = 0;
  let f = 0;
  let tst1 = 0;
  const eps = Number.EPSILON;
  for (let l = 0; l < n; l++) {
    tst1 = Math.max(tst1, Math.abs(d[l]) + Math.abs(e[l]));
    let m = l;
    while (m < n) {
      if (Math.abs(e[m]) <= eps * tst1) break;
      m++;
    }
    if (m > l) {
      let iterations = 0;
      do {
        if (++iterations > 60) throw new RangeError("symmetric eigenvalue iteration did not converge (matrix entries must be finite)");
        let g = d[l];
        let p = (d[l + 1] - g) / (2 * e[l]);
        let r = hypotenuse(p, 1);
        if (p < 0) r = -r;
        d[l] = e[l] / (p + r);
        d[l + 1] = e[l] * (p + r);
        const dl1 = d[l + 1];
        let h = g - d[l];
        for (let i = l + 2; i < n; i++) d[i] -= h;
        f += h;
        p = d[m];
        let c = 1, c2 = 1, c3 = 1;
        const el1 = e[l + 1];
        let s = 0, s2 = 0;
        for (let i = m - 1; i >= l; i--) {
          c3 = c2;
          c2 = c;
          s2 = s;
          g = c * e[i];
          h = c * p;
          r = hypotenuse(p, e[i]);
          e[i + 1] = s * r;
          s = e[i] / r;
          c = p / r;
          p = c * d[i] - s * g;
          d[i + 1] = h + s * (c * g + s * d[i]);
          const upper = (i + 1) * n;
          const lower = i * n;
          for (let k = 0; k < n; k++) {
            h = v[upper + k];
            v[upper + k] = s * v[lower + k] + c * h;
            v[lower + k] = c * v[lower + k] - s * h;
          }
        }
        p = (-s * s2 * c3 * el1 * e[l]) / dl1;
        e[l] = s * p;
        d[l] = c * p;
      } while (Math.abs(e[l]) > eps * tst1);
    }
    d[l] += f;
    e[l] = 0;
  }
  for (let i = 0; i < n - 1; i++) {
    let k = i;
    let p = d[i];
    for (let j = i + 1; j < n; j++) if (d[j] < p) {
      k = j;
      p = d[j];
    }
    if (k !== i) {
      d[k] = d[i];
      d[i] = p;
      for (let j = 0; j < n; j++) {
        const t = v[i * n + j];
        v[i * n + j] = v[k * n + j];
        v[k * n + j] = t;
      }
    }
  }
}
