import { compiledTermsOf } from "./evaluate.ts";
import type { SurrogateModel } from "./model.ts";

/**
 * The model at one output (a node and an axis) written as a quadratic form in the coefficients:
 * `c(a) = c0 + A.a + a^T B a` with `B` symmetric, `B_ii` the square terms and `B_ij = B_ji = b_ij / 2` for the
 * products (PHYSICS.md section 6). Terms the model does not have (a pruned model) are zero.
 */
export interface OutputQuadratic {
  /** Number of variables J. */
  J: number;
  c0: number;
  /** Length J, pm/nrad per nm. */
  linear: Float64Array;
  /** Row-major J x J, symmetric, pm/nrad per nm^2. */
  quadratic: Float64Array;
  /** Whether the model has any second-order term (otherwise `quadratic` stays zero). */
  hasQuadratic: boolean;
}

/** Space for the quadratic form of one output of a model with J variables. */
export function outputQuadratic(J: number): OutputQuadratic {
  return { J, c0: 0, linear: new Float64Array(J), quadratic: new Float64Array(J * J), hasQuadratic: false };
}

/**
 * Fill `out` with the quadratic form of output `p` (`p < M^2`: c_x at node p; `p >= M^2`: c_y at node p - M^2),
 * optionally keeping only the terms where `include[t]` is true (the dropped terms of a pruning).
 * @throws {RangeError} "output index must be an integer in [0, 2 M^2)"
 */
export function quadraticAt(model: SurrogateModel, p: number, out: OutputQuadratic, include?: ArrayLike<boolean>): OutputQuadratic {
  const P = 2 * model.pointsPerAxis * model.pointsPerAxis;
  if (!Number.isInteger(p) || p < 0 || p >= P) throw new RangeError("output index must be an integer in [0, 2 M^2)");
  const { count, first, second, degree } = compiledTermsOf(model);
  const J = out.J;
  out.c0 = 0;
  out.linear.fill(0);
  out.quadratic.fill(0);
  out.hasQuadratic = false;
  const c = model.coefficients;
  for (let t = 0; t < count; t++) {
    if (include && !include[t]) continue;
    const value = c[t * P + p];
    if (degree[t] === 0) out.c0 += value;
    else if (degree[t] === 1) out.linear[first[t]] += value;
    else {
      const i = first[t];
      const j = second[t];
      out.hasQuadratic = true;
      if (i === j) out.quadratic[i * J + i] += value;
      else {
        out.quadratic[i * J + j] += value / 2;
        out.quadratic[j * J + i] += value / 2;
      }
    }
  }
  return out;
}
