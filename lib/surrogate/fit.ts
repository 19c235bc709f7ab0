import { applyQTransposeInPlace, conditionNumber, householderQr, solveUpperTriangular } from "../linalg/index.ts";
import { featureMatrix, termLabel, type CompiledTerms, type Term } from "./terms.ts";

/** Designs whose equilibrated condition number exceeds this are refused (about 6 significant digits left). */
export const MAX_CONDITION_NUMBER = 1e10;

export interface FitResult {
  /** Term-major `T x 2 M^2`: row t is `[c_x map, c_y map]` row-major `[iy][ix]`, pm/nrad per nm^degree. */
  coefficients: Float64Array;
  /** 2-norm condition number of the design matrix after scaling each column to unit length. */
  conditionNumber: number;
  /** RMS over all samples, nodes and both axes of the training residual, pm/nrad (0 for a square design). */
  trainingResidualRmsPmPerNrad: number;
}

/**
 * Least-squares fit of every node and axis at once: with the design matrix `X[s][t] = f_t(a_s)` (features in
 * nm^degree) and the exact maps `Y[s][p]` (p over both axes and all nodes), solve `min ||X C - Y||` for all
 * `2 M^2` columns of `C` with one Householder QR of `X`. Columns of `X` are scaled to unit length before
 * factorising and the scale is undone on `C`; the training residual comes from the rows of `Q^T Y` below `T`.
 *
 * @param terms compiled term list (T terms)
 * @param termList the same terms by Noll index, for messages
 * @param coefficientsNm row-major `S x J` sample coefficients, nm RMS
 * @param mapsX exact c_x maps, `S x M^2`, pm/nrad (mapsY likewise)
 * @throws {RangeError} "generating set has S samples but the model has T terms; at least T are needed"
 * @throws {RangeError} "generating set has only U distinct samples (D duplicated) for T terms; at least T are needed"
 * @throws {RangeError} "design matrix is rank deficient: term <label> is not determined by the samples ..."
 * @throws {RangeError} "design matrix is too ill-conditioned (condition number K > 1e10) ..."
 * Source: Golub and Van Loan, Matrix Computations, 4th ed., section 5.3.3 (least squares by QR) and
 * section 5.3.7 (column scaling); PHYSICS.md section 5.
 */
export function fitCoefficients(
  terms: CompiledTerms,
  termList: readonly Term[],
  coefficientsNm: Float64Array,
  termCountJ: number,
  mapsX: Float64Array,
  mapsY: Float64Array,
  nodeCount: number,
): FitResult {
  const samples = coefficientsNm.length / termCountJ;
  const count = terms.count;
  if (!Number.isInteger(samples) || mapsX.length !== samples * nodeCount || mapsY.length !== samples * nodeCount) {
    throw new RangeError("coefficients and maps must describe the same number of samples");
  }
  if (samples < count) {
    throw new RangeError(`generating set has ${samples} samples but the model has ${count} terms; at least ${count} are needed`);
  }
  const distinct = new Set<string>();
  for (let s = 0; s < samples; s++) {
    distinct.add(Array.from(coefficientsNm.subarray(s * termCountJ, (s + 1) * termCountJ)).join(","));
  }
  if (distinct.size < count) {
    throw new RangeError(
      `generating set has only ${distinct.size} distinct samples (${samples - distinct.size} duplicated) for ${count} terms; at least ${count} are needed`,
    );
  }
  const design = featureMatrix(terms, coefficientsNm, termCountJ);
  const scale = new Float64Array(count);
  for (let t = 0; t < count; t++) {
    let sum = 0;
    for (let s = 0; s < samples; s++) sum += design[s * count + t] ** 2;
    if (sum === 0) throw new RangeError(`design matrix is rank deficient: term ${termLabel(termList[t])} is zero in every sample`);
    scale[t] = 1 / Math.sqrt(sum);
  }
  for (let s = 0; s < samples; s++) for (let t = 0; t < count; t++) design[s * count + t] *= scale[t];

  const qr = householderQr(design, samples, count);
  let largest = 0;
  for (let k = 0; k < count; k++) largest = Math.max(largest, Math.abs(qr.factors[k * samples + k]));
  for (let k = 0; k < count; k++) {
    if (Math.abs(qr.factors[k * samples + k]) <= 1e-10 * largest) {
      const duplicates = samples - distinct.size;
      throw new RangeError(
        `design matrix is rank deficient: term ${termLabel(termList[k])} is not determined by the samples` +
          (duplicates > 0 ? ` (${duplicates} samples are duplicated)` : " (it is a combination of earlier terms on this set)"),
      );
    }
  }
  const kappa = conditionNumber(qr);
  if (!(kappa <= MAX_CONDITION_NUMBER)) {
    throw new RangeError(
      `design matrix is too ill-conditioned (condition number ${kappa.toExponential(2)} > 1e10); use more or better spread samples`,
    );
  }

  const outputs = 2 * nodeCount;
  const rhs = new Float64Array(samples * outputs);
  for (let s = 0; s < samples; s++) {
    rhs.set(mapsX.subarray(s * nodeCount, (s + 1) * nodeCount), s * outputs);
    rhs.set(mapsY.subarray(s * nodeCount, (s + 1) * nodeCount), s * outputs + nodeCount);
  }
  applyQTransposeInPlace(qr, rhs, outputs);
  let residualSquares = 0;
  for (let i = count * outputs; i < rhs.length; i++) residualSquares += rhs[i] * rhs[i];
  const coefficients = solveUpperTriangular(qr, rhs, outputs);
  for (let t = 0; t < count; t++) {
    const row = t * outputs;
    for (let p = 0; p < outputs; p++) coefficients[row + p] *= scale[t];
  }
  return {
    coefficients,
    conditionNumber: kappa,
    trainingResidualRmsPmPerNrad: Math.sqrt(residualSquares / (samples * outputs)),
  };
}
