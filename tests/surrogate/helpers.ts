import { validityFromSamples, type SampleSet, type SurrogateModel, type Term } from "../../lib/surrogate/index.ts";

/** A small setup for synthetic models (5 x 5 nodes over +-50 nrad). */
export const smallSetup = {
  wavelengthNm: 1064,
  apertureDiameterM: 0.25,
  beamRadiusM: 0.11,
  distanceM: 2e9,
  farField: { halfAngleNrad: 50, pointsPerAxis: 5 },
  pupilSamples: 64,
};

/** Deterministic, irregular values for chosen polynomial coefficients (no symmetry the fit could exploit). */
export function chosenCoefficients(count: number, scale = 1): Float64Array {
  return Float64Array.from({ length: count }, (_, i) => scale * Math.sin(1.7 * i + 0.3) * (1 + (i % 7) / 3));
}

/**
 * Maps of a known polynomial, evaluated straight from its definition (PHYSICS.md section 5):
 * `c(theta; a) = sum_t C_t(theta) prod_{j in term t} a_j`, the product over the Noll indices a term names
 * (none for `c0`, one for `A_i`, two for `B_ij`). Independent of the product's feature code (`featureMatrix`),
 * so a fit or an evaluation that mixes up terms cannot agree with it by construction.
 */
export function synthesizeSet(
  terms: readonly Term[],
  nollIndices: number[],
  coefficients: Float64Array,
  coefficientsNm: Float64Array,
  pointsPerAxis: number,
): SampleSet {
  const J = nollIndices.length;
  const count = coefficientsNm.length / J;
  const nodes = pointsPerAxis * pointsPerAxis;
  const P = 2 * nodes;
  const x = new Float64Array(count * nodes);
  const y = new Float64Array(count * nodes);
  for (let s = 0; s < count; s++) {
    const a = (noll: number) => coefficientsNm[s * J + nollIndices.indexOf(noll)];
    const monomials = terms.map((term) => term.reduce((product, noll) => product * a(noll), 1));
    for (let p = 0; p < P; p++) {
      let v = 0;
      for (let t = 0; t < terms.length; t++) v += monomials[t] * coefficients[t * P + p];
      if (p < nodes) x[s * nodes + p] = v;
      else y[s * nodes + p - nodes] = v;
    }
  }
  return { coefficientsNm, x, y, count, pointsPerAxis };
}

/** A model object around given coefficients, with the validity of a generating set. */
export function syntheticModel(
  terms: Term[],
  nollIndices: number[],
  coefficients: Float64Array,
  generating: Float64Array,
  order: 1 | 2 = 2,
): SurrogateModel {
  return {
    setup: structuredClone(smallSetup),
    zernike: { ordering: "noll", indices: [...nollIndices] },
    nollIndices,
    order,
    terms,
    pointsPerAxis: smallSetup.farField.pointsPerAxis,
    coefficients,
    validity: validityFromSamples(nollIndices, generating),
    provenance: {
      design: "random",
      size: generating.length / nollIndices.length,
      maxRmsNm: 10,
      stepNm: null,
      seed: 3,
      uploadedSha256: null,
      validationSet: null,
      softwareVersion: "test",
      createdAt: "2026-12-01T00:00:00.000Z",
    },
    fit: { samples: generating.length / nollIndices.length, conditionNumber: 1, trainingResidualRmsPmPerNrad: 0 },
    statistics: null,
    pruning: null,
  };
}
