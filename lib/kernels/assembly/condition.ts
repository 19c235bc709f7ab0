// Power iterations of the 2-norm condition estimate (lib/linalg/conditionNumber.ts), float64 with f64x2, on R
// stored row-major (n x n, upper triangle) in linear memory. Same algorithm as the TypeScript reference:
// Golub and Van Loan, Matrix Computations, 4th ed., section 8.2.1 (power method).

@inline function sum2(v: v128): f64 {
  return f64x2.extract_lane(v, 0) + f64x2.extract_lane(v, 1);
}

/** sum_{j=from}^{n-1} a[j] b[j] */
@inline function dot(a: usize, b: usize, from: i32, n: i32): f64 {
  let acc = f64x2.splat(0);
  let j = from;
  for (; j + 2 <= n; j += 2) acc = f64x2.add(acc, f64x2.mul(v128.load(a + <usize>(j * 8)), v128.load(b + <usize>(j * 8))));
  let s = sum2(acc);
  for (; j < n; j++) s += load<f64>(a + <usize>(j * 8)) * load<f64>(b + <usize>(j * 8));
  return s;
}

/** y[j] += alpha x[j] for j in [from, n) */
@inline function axpy(alpha: f64, x: usize, y: usize, from: i32, n: i32): void {
  const av = f64x2.splat(alpha);
  let j = from;
  for (; j + 2 <= n; j += 2) {
    const p = y + <usize>(j * 8);
    v128.store(p, f64x2.add(v128.load(p), f64x2.mul(av, v128.load(x + <usize>(j * 8)))));
  }
  for (; j < n; j++) {
    const p = y + <usize>(j * 8);
    store<f64>(p, load<f64>(p) + alpha * load<f64>(x + <usize>(j * 8)));
  }
}

/** out = R^T R x (tmp = R x first). */
function multiplyRtR(rr: usize, n: i32, x: usize, out: usize, tmp: usize): void {
  for (let i = 0; i < n; i++) store<f64>(tmp + <usize>(i * 8), dot(rr + <usize>(i * n * 8), x, i, n));
  memory.fill(out, 0, <usize>(n * 8));
  for (let i = 0; i < n; i++) axpy(load<f64>(tmp + <usize>(i * 8)), rr + <usize>(i * n * 8), out, i, n);
}

/** out = (R^T R)^-1 x: R^T tmp = x (forward), then R out = tmp (backward). */
function solveRtR(rr: usize, n: i32, x: usize, out: usize, tmp: usize): void {
  memory.copy(tmp, x, <usize>(n * 8));
  for (let i = 0; i < n; i++) {
    const row = rr + <usize>(i * n * 8);
    const ti = load<f64>(tmp + <usize>(i * 8)) / load<f64>(row + <usize>(i * 8));
    store<f64>(tmp + <usize>(i * 8), ti);
    axpy(-ti, row, tmp, i + 1, n);
  }
  for (let i = n - 1; i >= 0; i--) {
    const row = rr + <usize>(i * n * 8);
    const s = load<f64>(tmp + <usize>(i * 8)) - dot(row, out, i + 1, n);
    store<f64>(out + <usize>(i * 8), s / load<f64>(row + <usize>(i * 8)));
  }
}

function normalise(x: usize, n: i32): f64 {
  const norm = sqrt(dot(x, x, 0, n));
  if (norm > 0) for (let i = 0; i < n; i++) store<f64>(x + <usize>(i * 8), load<f64>(x + <usize>(i * 8)) / norm);
  return norm;
}

/**
 * Dominant eigenvalue of R^T R (inverse = 0) or of (R^T R)^-1 (inverse = 1) by the power method from the fixed
 * start vector of the reference, until the Rayleigh quotient changes by less than 1e-10 relative. Scratch: three
 * vectors of n doubles at `work`.
 */
export function dominantEigenvalue(rr: usize, n: i32, inverse: i32, maxIterations: i32, work: usize): f64 {
  let x = work;
  let y = work + <usize>(n * 8);
  const tmp = y + <usize>(n * 8);
  for (let i = 0; i < n; i++) store<f64>(x + <usize>(i * 8), 1 + <f64>((i * 7919) % 101) / 101);
  normalise(x, n);
  let lambda: f64 = 0;
  for (let it = 0; it < maxIterations; it++) {
    if (inverse) solveRtR(rr, n, x, y, tmp);
    else multiplyRtR(rr, n, x, y, tmp);
    const d = dot(x, y, 0, n);
    const norm = normalise(y, n);
    if (norm == 0 || !isFinite(norm)) return norm;
    const previous = lambda;
    lambda = d;
    const swap = x;
    x = y;
    y = swap;
    if (it > 2 && abs(lambda - previous) <= 1e-10 * abs(lambda)) break;
  }
  return lambda;
}
