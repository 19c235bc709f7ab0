/** How {@link maximiseOnBallDiagonal} found its maximiser. */
export type BallCase = "interior" | "boundary" | "hard";

/**
 * Maximum of `f(x) = g.x + x^T S x` over the ball `||x|| <= r`, with `S = diag(d)` (the caller has rotated into
 * the eigenbasis of S, so `g` here is `Q^T g`). This is the trust-region subproblem `min -f`: the global maximiser
 * satisfies `x = (2 (nu I - S))^+ g` with `nu >= max(d)`, `nu >= 0` and `nu (||x|| - r) = 0`
 * (J. J. More and D. C. Sorensen, "Computing a trust region step", SIAM J. Sci. Stat. Comput. 4, 553-572 (1983),
 * Lemma 2.1 and Theorem 3.1). Cases:
 * - interior: `max(d) < 0` and the stationary point `x_i = g_i / (-2 d_i)` lies inside the ball;
 * - boundary: `nu > max(d, 0)` solves the secular equation `sum g_i^2 / (4 (nu - d_i)^2) = r^2`, found by Newton's
 *   method on `1/r - 1/||x(nu)||` (nearly linear in nu; More and Sorensen, section 4) inside a bisection bracket;
 * - hard: `g` has (numerically) no component along the eigenvectors of the largest eigenvalue and
 *   `||x(max d)|| <= r` for the other components: `nu = max(d)` and the missing length `sqrt(r^2 - ||x||^2)` goes
 *   along that eigenvector (More and Sorensen, section 5). A component so small that the root would lie closer to
 *   `max(d)` than rounding resolves is treated the same way; the value then differs from the true one by less than
 *   `2 |g_top| r`.
 *
 * @param d eigenvalues of S (any order), pm/nrad per nm^2
 * @param g linear coefficients in the same basis, pm/nrad per nm
 * @param r radius of the ball, nm (>= 0)
 * @param x out, length of d: the maximiser in the same basis
 * @returns `{ value: f(x), kind }`
 */
export function maximiseOnBallDiagonal(d: ArrayLike<number>, g: ArrayLike<number>, r: number, x: Float64Array): { value: number; kind: BallCase } {
  const n = d.length;
  if (r === 0) {
    x.fill(0);
    return { value: 0, kind: "interior" };
  }
  let dMax = -Infinity;
  let dScale = 0;
  let gNorm2 = 0;
  for (let i = 0; i < n; i++) {
    if (d[i] > dMax) dMax = d[i];
    dScale = Math.max(dScale, Math.abs(d[i]));
    gNorm2 += g[i] * g[i];
  }
  const gNorm = Math.sqrt(gNorm2);
  if (dScale === 0) {
    // No quadratic part: x = r g / ||g|| (Cauchy-Schwarz), any unit vector when g = 0.
    for (let i = 0; i < n; i++) x[i] = gNorm > 0 ? (r * g[i]) / gNorm : i === 0 ? r : 0;
    return { value: gNorm * r, kind: "boundary" };
  }
  const norm2At = (nu: number) => {
    let s = 0;
    for (let i = 0; i < n; i++) {
      const q = g[i] / (2 * (nu - d[i]));
      s += q * q;
    }
    return s;
  };
  if (dMax < 0 && norm2At(0) <= r * r) {
    for (let i = 0; i < n; i++) x[i] = g[i] / (-2 * d[i]);
    return { value: valueOf(d, g, x), kind: "interior" };
  }

  // Eigenvalues within rounding of the largest form the cluster the hard case concerns.
  const clusterTolerance = 64 * Number.EPSILON * dScale * n;
  let gTop2 = 0;
  let restNorm2 = 0;
  let top = 0;
  let topG = -1;
  for (let i = 0; i < n; i++) {
    if (dMax - d[i] <= clusterTolerance) {
      gTop2 += g[i] * g[i];
      if (Math.abs(g[i]) > topG) {
        topG = Math.abs(g[i]);
        top = i;
      }
    } else {
      const q = g[i] / (2 * (dMax - d[i]));
      restNorm2 += q * q;
    }
  }
  const lower = Math.max(dMax, 0);
  if (dMax >= 0 && restNorm2 < r * r) {
    // The root nu - dMax is about |g_top| / (2 sqrt(r^2 - ||x_rest||^2)); below what doubles resolve: hard case.
    const gap = Math.sqrt(gTop2) / (2 * Math.sqrt(r * r - restNorm2));
    if (gap <= 1e3 * Number.EPSILON * Math.max(dScale, gNorm / r)) {
      for (let i = 0; i < n; i++) x[i] = dMax - d[i] <= clusterTolerance ? 0 : g[i] / (2 * (dMax - d[i]));
      const tau = Math.sqrt(r * r - restNorm2);
      x[top] = g[top] < 0 ? -tau : tau;
      return { value: valueOf(d, g, x), kind: "hard" };
    }
  }

  // Boundary: bracket [lo, hi] with ||x(lo)|| >= r >= ||x(hi)||.
  let lo = lower;
  let hi = lower + gNorm / (2 * r) + dScale * 1e-12;
  while (norm2At(hi) > r * r) hi = lower + 2 * (hi - lower);
  let nu = hi;
  for (let iteration = 0; iteration < 200; iteration++) {
    let s = 0;
    let ds = 0;
    for (let i = 0; i < n; i++) {
      const inv = 1 / (nu - d[i]);
      const q2 = (g[i] * g[i] * inv * inv) / 4;
      s += q2;
      ds -= 2 * q2 * inv;
    }
    const norm = Math.sqrt(s);
    if (Math.abs(norm - r) <= 1e-14 * r) break;
    if (norm > r) lo = nu;
    else hi = nu;
    // Newton on psi(nu) = 1/r - 1/||x||: psi' = (d||x||^2/dnu) / (2 ||x||^3).
    const psi = 1 / r - 1 / norm;
    const dpsi = ds / (2 * s * norm);
    let next = nu - psi / dpsi;
    if (!(next > lo && next < hi)) next = (lo + hi) / 2;
    if (next === nu || hi - lo <= 4 * Number.EPSILON * Math.max(1, Math.abs(hi))) {
      nu = next;
      break;
    }
    nu = next;
  }
  for (let i = 0; i < n; i++) x[i] = g[i] / (2 * (nu - d[i]));
  // Put the point exactly on the sphere (the secular equation is met to rounding; this removes the rest).
  let norm2 = 0;
  for (let i = 0; i < n; i++) norm2 += x[i] * x[i];
  const scale = r / Math.sqrt(norm2);
  for (let i = 0; i < n; i++) x[i] *= scale;
  return { value: valueOf(d, g, x), kind: "boundary" };
}

function valueOf(d: ArrayLike<number>, g: ArrayLike<number>, x: Float64Array): number {
  let value = 0;
  for (let i = 0; i < d.length; i++) value += g[i] * x[i] + d[i] * x[i] * x[i];
  return value;
}
