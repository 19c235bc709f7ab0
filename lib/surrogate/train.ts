import { toNollIndices } from "../optics/zernike.ts";
import { validateSetup } from "../optics/setup.ts";
import { requireDefinedTtl } from "../optics/ttlMap.ts";
import type { OpticalSetup, ZernikeSet } from "../optics/types.ts";
import { sha256Hex } from "./checksum.ts";
import {
  axesAndPairsDesign,
  checkSampleSet,
  randomAmplitudeDesign,
  randomDesign,
  type RandomDesignOptions,
  type SampleSet,
} from "./designs.ts";
import { evaluateBatch } from "./evaluate.ts";
import { fitCoefficients } from "./fit.ts";
import type { Provenance, SurrogateModel } from "./model.ts";
import { roundToStored } from "./modelFile.ts";
import { splitAxes } from "./significance.ts";
import { residualStatistics } from "./statistics.ts";
import { compileTerms, fullTerms, type SurrogateOrder } from "./terms.ts";
import { validityFromSamples } from "./validity.ts";

export type GeneratingSetSpec =
  | ({ design: "random" } & RandomDesignOptions)
  /** Step d of the design, nm; every sample lies within total RMS `d sqrt(2)`. */
  | { design: "axes-and-pairs"; stepNm: number }
  /** Samples computed elsewhere: coefficients in the model's Noll order, with their exact maps. */
  | { design: "uploaded"; set: SampleSet };

/** A seeded validation set propagated exactly, or one computed elsewhere (coefficients in the model's Noll order). */
export type ValidationSetSpec = RandomDesignOptions | { design: "uploaded"; set: SampleSet };

export interface TrainingRequest {
  setup: OpticalSetup;
  zernike: ZernikeSet;
  order: SurrogateOrder;
  generatingSet: GeneratingSetSpec;
  /**
   * Seeded validation set (random directions, total RMS uniform in [0, maxRmsNm]), propagated exactly, or an
   * uploaded one; null trains without residual statistics.
   */
  validationSet: ValidationSetSpec | null;
  softwareVersion: string;
  /** ISO 8601 time stamp to record (the caller's clock; the core reads none). */
  createdAt: string;
}

/**
 * Exact maps for `S x J` coefficients in `nollIndices` order: flat `x`, `y` of `S x M^2` values, pm/nrad, and the
 * nodes where the TTL is undefined (FlatTtlMaps; training refuses them).
 */
export type ExactPropagator = (
  nollIndices: number[],
  coefficientsNm: Float64Array,
  onProgress: (done: number, total: number) => void,
) => Promise<{ x: Float64Array; y: Float64Array; undefinedNodes: ArrayLike<number> }>;

export type TrainingPhase = "generating set" | "fit" | "validation set" | "statistics";

export interface TrainingResult {
  model: SurrogateModel;
  generatingSet: SampleSet;
  validationSet: SampleSet | null;
}

/** SHA-256 (hex) of a sample set's coefficients then x and y maps, as Float64 little-endian bytes. */
export function sampleSetSha256(set: SampleSet): string {
  const parts = [set.coefficientsNm, set.x, set.y];
  const bytes = new Uint8Array(parts.reduce((n, p) => n + p.length * 8, 0));
  const view = new DataView(bytes.buffer);
  let offset = 0;
  for (const part of parts) for (let i = 0; i < part.length; i++, offset += 8) view.setFloat64(offset, part[i], true);
  return sha256Hex(bytes);
}


/**
 * The coefficients of a built-in generating-set design (`S x J`, row-major, nm RMS), exactly as training makes
 * them: a run split into chunks on several machines regenerates them from the spec and gets the same numbers.
 * @throws {RangeError} as the design functions
 */
export function generatingCoefficients(spec: Exclude<GeneratingSetSpec, { design: "uploaded" }>, termCountJ: number): Float64Array {
  if (spec.design === "random") return randomDesign(termCountJ, spec);
  if (spec.design === "axes-and-pairs") return axesAndPairsDesign(termCountJ, spec.stepNm);
  throw new RangeError(`unknown generating-set design ${JSON.stringify((spec as { design: unknown }).design)}`);
}

/** The coefficients of a seeded validation set (`S x J`, nm RMS), as training makes them. */
export function validationCoefficients(spec: RandomDesignOptions, termCountJ: number): Float64Array {
  return randomAmplitudeDesign(termCountJ, spec);
}

function isUploaded<T extends object>(spec: T | { design: "uploaded"; set: SampleSet }): spec is { design: "uploaded"; set: SampleSet } {
  return (spec as { design?: unknown }).design === "uploaded";
}

/**
 * Train a surrogate: build (or take) the generating set, propagate it exactly, fit all nodes and axes with one
 * factorisation, round the coefficients to their stored precision, then propagate a separate seeded
 * validation set (uniform in amplitude, see `randomAmplitudeDesign`) and compute the residual statistics of the
 * stored model against it.
 *
 * @param propagate the exact method (injected, so the core stays free of threads and I/O)
 * @param onProgress called with the phase and its progress
 * @throws {RangeError|TypeError} for an invalid setup, Zernike set, order or design, and from `fitCoefficients`
 * Source: PHYSICS.md section 5.
 */
export async function trainSurrogate(
  request: TrainingRequest,
  propagate: ExactPropagator,
  onProgress: (phase: TrainingPhase, done: number, total: number) => void = () => {},
): Promise<TrainingResult> {
  const setup = validateSetup(request.setup);
  const nollIndices = toNollIndices(request.zernike);
  const J = nollIndices.length;
  const M = setup.farField.pointsPerAxis;
  const nodes = M * M;
  const terms = fullTerms(nollIndices, request.order);
  const compiled = compileTerms(terms, nollIndices);
  const spec = request.generatingSet;

  let generatingSet: SampleSet;
  const provenance: Provenance = {
    design: spec.design,
    size: 0,
    maxRmsNm: null,
    stepNm: null,
    seed: null,
    uploadedSha256: null,
    validationSet: request.validationSet && !isUploaded(request.validationSet) ? { ...request.validationSet } : null,
    validationUploadedSha256: null,
    softwareVersion: request.softwareVersion,
    createdAt: request.createdAt,
  };
  if (spec.design === "uploaded") {
    checkSampleSet(spec.set, J, M);
    generatingSet = spec.set;
    provenance.uploadedSha256 = sampleSetSha256(spec.set);
  } else {
    const coefficientsNm = generatingCoefficients(spec, J);
    if (spec.design === "random") {
      provenance.seed = spec.seed;
      provenance.maxRmsNm = spec.maxRmsNm;
    } else {
      provenance.stepNm = spec.stepNm;
      // The pair samples (d, d) are the largest, with total RMS d sqrt(2).
      provenance.maxRmsNm = spec.stepNm * Math.SQRT2;
    }
    const count = coefficientsNm.length / J;
    // Refuse a design that cannot be fitted before spending time on exact maps.
    if (count < compiled.count) {
      throw new RangeError(`generating set has ${count} samples but the model has ${compiled.count} terms; at least ${compiled.count} are needed`);
    }
    const maps = requireDefinedTtl(
      { pointsPerAxis: M, ...(await propagate(nollIndices, coefficientsNm, (done, total) => onProgress("generating set", done, total))) },
      "generating set",
    );
    generatingSet = { coefficientsNm, x: maps.x, y: maps.y, count, pointsPerAxis: M };
    checkSampleSet(generatingSet, J, M);
  }
  provenance.size = generatingSet.count;

  onProgress("fit", 0, 1);
  const fit = fitCoefficients(compiled, terms, generatingSet.coefficientsNm, J, generatingSet.x, generatingSet.y, nodes);
  onProgress("fit", 1, 1);

  const model: SurrogateModel = {
    setup,
    zernike: { ordering: request.zernike.ordering, indices: [...request.zernike.indices] },
    nollIndices,
    order: request.order,
    terms,
    pointsPerAxis: M,
    coefficients: roundToStored(fit.coefficients),
    validity: validityFromSamples(nollIndices, generatingSet.coefficientsNm),
    provenance,
    fit: {
      samples: generatingSet.count,
      conditionNumber: fit.conditionNumber,
      trainingResidualRmsPmPerNrad: fit.trainingResidualRmsPmPerNrad,
    },
    statistics: null,
    pruning: null,
  };

  let validationSet: SampleSet | null = null;
  if (request.validationSet) {
    if (isUploaded(request.validationSet)) {
      checkSampleSet(request.validationSet.set, J, M);
      validationSet = request.validationSet.set;
      provenance.validationUploadedSha256 = sampleSetSha256(validationSet);
    } else {
      const coefficientsNm = validationCoefficients(request.validationSet, J);
      const maps = requireDefinedTtl(
        { pointsPerAxis: M, ...(await propagate(nollIndices, coefficientsNm, (done, total) => onProgress("validation set", done, total))) },
        "validation set",
      );
      validationSet = { coefficientsNm, x: maps.x, y: maps.y, count: request.validationSet.size, pointsPerAxis: M };
    }
    const coefficientsNm = validationSet.coefficientsNm;
    onProgress("statistics", 0, 1);
    const predicted = splitAxes(evaluateBatch(model, coefficientsNm), validationSet.count, nodes);
    model.statistics = residualStatistics(validationSet, J, predicted);
    onProgress("statistics", 1, 1);
  }
  return { model, generatingSet, validationSet };
}

/**
 * The validation set of a trained model, made again from its provenance (seed, size, amplitude) and propagated
 * exactly: the same wavefronts, hence the same statistics, on any machine. Used to check pruning later.
 * @returns null when the model was trained without a validation set
 */
export async function regenerateValidationSet(model: SurrogateModel, propagate: ExactPropagator): Promise<SampleSet | null> {
  const spec = model.provenance.validationSet;
  if (!spec) return null;
  const coefficientsNm = randomAmplitudeDesign(model.nollIndices.length, spec);
  const maps = requireDefinedTtl(
    { pointsPerAxis: model.pointsPerAxis, ...(await propagate([...model.nollIndices], coefficientsNm, () => {})) },
    "validation set",
  );
  const set: SampleSet = { coefficientsNm, x: maps.x, y: maps.y, count: spec.size, pointsPerAxis: model.pointsPerAxis };
  checkSampleSet(set, model.nollIndices.length, model.pointsPerAxis);
  return set;
}
