export interface TermBound {
  noll: number;
  minNm: number;
  maxNm: number;
}

/** What a model was fitted on: the largest total RMS and the range of each coefficient. */
export interface ValidityRange {
  maxTotalRmsNm: number;
  termBoundsNm: TermBound[];
}

/**
 * Validity range of a generating set: `max_s sqrt(sum_j a_sj^2)` and, per term, `[min_s a_sj, max_s a_sj]`, nm.
 * @throws {RangeError} "sample set must not be empty"
 * Source: PHYSICS.md section 5 (validity range).
 */
export function validityFromSamples(nollIndices: readonly number[], coefficientsNm: ArrayLike<number>): ValidityRange {
  const termCountJ = nollIndices.length;
  const samples = Math.floor(coefficientsNm.length / termCountJ);
  if (samples < 1) throw new RangeError("sample set must not be empty");
  const bounds = nollIndices.map((noll) => ({ noll, minNm: Infinity, maxNm: -Infinity }));
  let maxTotalRmsNm = 0;
  for (let s = 0; s < samples; s++) {
    let sum = 0;
    for (let k = 0; k < termCountJ; k++) {
      const a = coefficientsNm[s * termCountJ + k];
      sum += a * a;
      if (a < bounds[k].minNm) bounds[k].minNm = a;
      if (a > bounds[k].maxNm) bounds[k].maxNm = a;
    }
    maxTotalRmsNm = Math.max(maxTotalRmsNm, Math.sqrt(sum));
  }
  return { maxTotalRmsNm, termBoundsNm: bounds };
}

const SLACK = 1e-9;

const nm = (value: number) => `${Number(value.toPrecision(4))} nm`;

/**
 * Warnings for a wavefront outside the validity range, one per thing outside (total RMS, then each term).
 * A small relative slack (1e-9) absorbs rounding of values that sit on the boundary.
 * @param coefficientsNm in the model's Noll order, nm RMS
 * @returns an empty list when the wavefront is inside the range
 */
export function validityWarnings(validity: ValidityRange, coefficientsNm: ArrayLike<number>): string[] {
  const warnings: string[] = [];
  let sum = 0;
  for (let k = 0; k < validity.termBoundsNm.length; k++) sum += coefficientsNm[k] ** 2;
  const rms = Math.sqrt(sum);
  const slack = SLACK * Math.max(1, validity.maxTotalRmsNm);
  if (rms > validity.maxTotalRmsNm + slack) {
    warnings.push(`total RMS ${nm(rms)} is above the model's validity limit of ${nm(validity.maxTotalRmsNm)}`);
  }
  validity.termBoundsNm.forEach((bound, k) => {
    const a = coefficientsNm[k];
    if (a < bound.minNm - slack || a > bound.maxNm + slack) {
      warnings.push(`Z${bound.noll} = ${nm(a)} is outside the fitted range [${nm(bound.minNm)}, ${nm(bound.maxNm)}]`);
    }
  });
  return warnings;
}
