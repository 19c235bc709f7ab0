import { symmetricEigenInto, symmetricEigenWork, type SymmetricEigenWork } from "../linalg/symmetricEigen.ts";
import type { SurrogateModel } from "./model.ts";
import { outputQuadratic, quadraticAt, type OutputQuadratic } from "./quadratic.ts";
import { maximiseOnBallDiagonal, type BallCase } from "./trustRegion.ts";

/**
 * Check a WFE budget (total RMS radius of the ball of coefficients).
 * @throws {RangeError} "budgetRmsNm must be a finite number > 0"
 */
export function checkBudgetRmsNm(budgetRmsNm: number): void {
  if (typeof budgetRmsNm !== "number" || !Number.isFinite(budgetRmsNm) || budgetRmsNm <= 0) {
    throw new RangeError("budgetRmsNm must be a finite number > 0");
  }
}

/** Eigen-decomposition of one output's B, kept with the form it belongs to. */
interface Decomposed {
  form: OutputQuadratic;
  eigen: SymmetricEigenWork;
  /** Q^T A. */
  rotated: Float64Array;
}

function decomposer(J: number) {
  const entry: Decomposed = { form: outputQuadratic(J), eigen: symmetricEigenWork(J), rotated: new Float64Array(J) };
  return (model: SurrogateModel, p: number, include?: ArrayLike<boolean>): Decomposed => {
    quadraticAt(model, p, entry.form, include);
    const { form, eigen, rotated } = entry;
    if (form.hasQuadratic) {
      symmetricEigenInto(form.quadratic, eigen);
    } else {
      eigen.values.fill(0);
      eigen.vectors.fill(0);
      for (let k = 0; k < J; k++) eigen.vectors[k * J + k] = 1;
    }
    const v = eigen.vectors;
    for (let k = 0; k < J; k++) {
      let s = 0;
      for (let i = 0; i < J; i++) s += v[k * J + i] * form.linear[i];
      rotated[k] = s;
    }
    return entry;
  };
}

/**
 * Per-output simple bound `|c(a) - c0| <= ||A|| r + |lambda|_max(B) r^2` over the ball `||a|| <= r`
 * (Cauchy-Schwarz for the linear part, the Rayleigh quotient for the quadratic part; PHYSICS.md section 6), for the
 * terms where `include[t]` (all terms when omitted). Returned without `|c0|`; the caller adds it where it belongs.
 *
 * @param budgetRmsNm r, nm
 * @returns length `2 M^2` (`[c_x map, c_y map]`), pm/nrad
 * @throws {RangeError} from {@link checkBudgetRmsNm}
 */
export function simpleBoundMaps(model: SurrogateModel, budgetRmsNm: number, include?: ArrayLike<boolean>): Float64Array {
  checkBudgetRmsNm(budgetRmsNm);
  const J = model.nollIndices.length;
  const P = 2 * model.pointsPerAxis * model.pointsPerAxis;
  const decompose = decomposer(J);
  const out = new Float64Array(P);
  for (let p = 0; p < P; p++) {
    const { form, eigen } = decompose(model, p, include);
    let a2 = 0;
    for (let i = 0; i < J; i++) a2 += form.linear[i] * form.linear[i];
    const rho = Math.max(Math.abs(eigen.values[0]), Math.abs(eigen.values[J - 1]));
    out[p] = Math.sqrt(a2) * budgetRmsNm + rho * budgetRmsNm * budgetRmsNm;
  }
  return out;
}

/** Worst case of one model on a WFE ball, per output and overall. */
export interface WorstCase {
  budgetRmsNm: number;
  /** `|c0| + ||A|| r + |lambda|_max(B) r^2` per output, `[c_x map, c_y map]`, pm/nrad. */
  bound: Float64Array;
  /** `max |c(a)|` over `||a|| <= r` per output, pm/nrad. */
  exact: Float64Array;
  /** The output with the largest exact value: node `p mod M^2`, axis x for `p < M^2`. */
  worstOutput: number;
  worstValue: number;
  /** Sign of c at the maximiser: +1 where c reaches +worstValue, -1 where it reaches -worstValue. */
  worstSign: 1 | -1;
  /** The maximising coefficients (model Noll order, nm, total RMS r unless the maximum is interior). */
  worstCoefficientsNm: Float64Array;
  /** How the worst output's subproblem was solved. */
  worstKind: BallCase;
  /** Outputs solved in the hard case (both signs counted). */
  hardCases: number;
}

/**
 * Exact worst case of the quadratic model over the WFE ball `||a|| <= r`: at every node and axis,
 * `max |c(a)| = max(c0 + max_a (A.a + a^T B a), -c0 + max_a (-A.a - a^T B a))`, each a trust-region subproblem
 * solved from one symmetric eigen-decomposition `B = Q diag(d) Q^T` per output (the second sign uses `-d` and
 * `-Q^T A`), hard case included (see {@link maximiseOnBallDiagonal}); beside it the simple bound. For a model
 * without B this equals `|c0| + ||A|| r` (Cauchy-Schwarz). The maximising wavefront of the worst output is returned.
 *
 * @param budgetRmsNm r, total RMS, nm
 * @throws {RangeError} from {@link checkBudgetRmsNm}
 * Source: J. J. More and D. C. Sorensen, SIAM J. Sci. Stat. Comput. 4, 553-572 (1983); PHYSICS.md section 6.
 */
export function worstCase(model: SurrogateModel, budgetRmsNm: number): WorstCase {
  checkBudgetRmsNm(budgetRmsNm);
  const r = budgetRmsNm;
  const J = model.nollIndices.length;
  const P = 2 * model.pointsPerAxis * model.pointsPerAxis;
  const decompose = decomposer(J);
  const bound = new Float64Array(P);
  const exact = new Float64Array(P);
  const xPlus = new Float64Array(J);
  const xMinus = new Float64Array(J);
  const negatedValues = new Float64Array(J);
  const negatedRotated = new Float64Array(J);
  let worstOutput = 0;
  let worstValue = -1;
  let worstSign: 1 | -1 = 1;
  let worstKind: BallCase = "boundary";
  const worstX = new Float64Array(J);
  let worstVectorsOf = -1;
  let hardCases = 0;
  for (let p = 0; p < P; p++) {
    const { form, eigen, rotated } = decompose(model, p);
    const d = eigen.values;
    let a2 = 0;
    for (let i = 0; i < J; i++) {
      a2 += form.linear[i] * form.linear[i];
      negatedValues[i] = -d[i];
      negatedRotated[i] = -rotated[i];
    }
    bound[p] = Math.abs(form.c0) + Math.sqrt(a2) * r + Math.max(Math.abs(d[0]), Math.abs(d[J - 1])) * r * r;
    const plus = maximiseOnBallDiagonal(d, rotated, r, xPlus);
    const minus = maximiseOnBallDiagonal(negatedValues, negatedRotated, r, xMinus);
    if (plus.kind === "hard") hardCases++;
    if (minus.kind === "hard") hardCases++;
    const up = form.c0 + plus.value;
    const down = -form.c0 + minus.value;
    const value = Math.max(up, down);
    exact[p] = value;
    if (value > worstValue) {
      worstValue = value;
      worstOutput = p;
      worstSign = up >= down ? 1 : -1;
      worstKind = up >= down ? plus.kind : minus.kind;
      worstX.set(up >= down ? xPlus : xMinus);
      worstVectorsOf = p;
    }
  }
  // Back from the eigenbasis of the worst output: a = Q x.
  const { eigen } = decompose(model, worstVectorsOf);
  const coefficients = new Float64Array(J);
  for (let k = 0; k < J; k++) for (let i = 0; i < J; i++) coefficients[i] += eigen.vectors[k * J + i] * worstX[k];
  return { budgetRmsNm: r, bound, exact, worstOutput, worstValue, worstSign, worstCoefficientsNm: coefficients, worstKind, hardCases };
}

/**
 * Exact maximum of `|c0 + g.a + a^T S a|` over `||a|| <= r` for one explicit quadratic (S symmetric, row-major),
 * with its maximiser: the same solution as {@link worstCase} uses per output, for callers with their own forms.
 * @throws {RangeError} from {@link checkBudgetRmsNm}; "linear and quadratic must have J and J x J entries"
 */
export function maximiseAbsQuadraticOnBall(
  c0: number,
  linear: ArrayLike<number>,
  quadratic: ArrayLike<number>,
  budgetRmsNm: number,
): { value: number; sign: 1 | -1; coefficientsNm: Float64Array; kind: BallCase } {
  checkBudgetRmsNm(budgetRmsNm);
  const J = linear.length;
  if (quadratic.length !== J * J || J < 1) throw new RangeError("linear and quadratic must have J and J x J entries");
  const eigen = symmetricEigenWork(J);
  symmetricEigenInto(quadratic, eigen);
  const rotated = new Float64Array(J);
  for (let k = 0; k < J; k++) for (let i = 0; i < J; i++) rotated[k] += eigen.vectors[k * J + i] * linear[i];
  const xPlus = new Float64Array(J);
  const xMinus = new Float64Array(J);
  const plus = maximiseOnBallDiagonal(eigen.values, rotated, budgetRmsNm, xPlus);
  const minus = maximiseOnBallDiagonal(eigen.values.map((v) => -v), rotated.map((v) => -v), budgetRmsNm, xMinus);
  const up = c0 + plus.value;
  const down = -c0 + minus.value;
  const x = up >= down ? xPlus : xMinus;
  const coefficients = new Float64Array(J);
  for (let k = 0; k < J; k++) for (let i = 0; i < J; i++) coefficients[i] += eigen.vectors[k * J + i] * x[k];
  return { value: Math.max(up, down), sign: up >= down ? 1 : -1, coefficientsNm: coefficients, kind: up >= down ? plus.kind : minus.kind };
}
