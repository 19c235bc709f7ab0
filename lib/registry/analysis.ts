import { assertCan, type Actor } from "../access/actor.ts";
import { evaluatesVersionState, evaluationTarget, type EvaluationTarget } from "../db/versions.ts";
import { ForbiddenError, NotFoundError, UnprocessableError } from "../errors.ts";
import { HeightMapError, readHeightMap } from "../formats/heightMap.ts";
import { resampleToPupil } from "../optics/pupilMap.ts";
import { thetaGridNrad } from "../optics/setup.ts";
import type { Wavefront, ZernikeSet } from "../optics/types.ts";
import { wavefrontToVector } from "../optics/wavefront.ts";
import { nollToAnsi, toNollIndices } from "../optics/zernike.ts";
import type { ComputePool } from "../parallel/computePool.ts";
import type { AnalysisRequest, AnalysisResult } from "../surrogate/analysis.ts";
import { checkFinite, evaluateInto } from "../surrogate/evaluate.ts";
import { interpolateMap } from "../surrogate/interpolate.ts";
import { SURROGATE_NOTICE, type SurrogateModel } from "../surrogate/model.ts";
import { projectOntoModes } from "../surrogate/modes.ts";
import { noiseBudget, worstNoiseNode, type Spectrum } from "../surrogate/noise.ts";
import { validityWarnings } from "../surrogate/validity.ts";
import type { CorrectionBody, FitFields, ModesBody, NoiseBody, WorstCaseBody } from "../validation/analysis.ts";
import { surrogateFor } from "./evaluate.ts";

type Pool = () => ComputePool;

/** What every analysis answer starts with: the version it used. */
export interface AnalysisHead {
  model: string;
  version: number;
  state: string;
  coefficientsSha256: string;
  thetaNrad: number[];
}

/** A model and version an actor may analyse: the read permission, and the version states of evaluation. */
export async function analysisTarget(actor: Actor, slug: string, version: number): Promise<{ target: EvaluationTarget; model: SurrogateModel; head: AnalysisHead }> {
  assertCan(actor, "read", slug);
  const target = await evaluationTarget(slug, version);
  if (!target) throw new NotFoundError(`Model "${slug}" has no version ${version}.`);
  if (!evaluatesVersionState(actor, target.state)) {
    throw new ForbiddenError(`Version ${version} is ${target.state}: tokens analyse released and retired versions; drafts and versions in review only signed-in modellers and reviewers.`);
  }
  const model = await surrogateFor(target);
  return {
    target,
    model,
    head: { model: slug, version: target.version, state: target.state, coefficientsSha256: target.coefficientsSha256, thetaNrad: Array.from(thetaGridNrad(model.setup.farField)) },
  };
}

/** Run an analysis on the pool, turning the core's refusals of the client's numbers into 422. */
async function analyse<R extends AnalysisRequest>(pool: Pool, model: SurrogateModel | null, request: R): Promise<AnalysisResult<R>> {
  try {
    return await pool().analyse(model, request);
  } catch (error) {
    if (error instanceof RangeError || (error as Error)?.name === "RangeError") throw new UnprocessableError(`The analysis cannot be made: ${(error as Error).message}.`);
    throw error;
  }
}

function vectorOf(model: SurrogateModel, wavefront: Wavefront, path: string): Float64Array {
  try {
    return wavefrontToVector(wavefront, model.nollIndices);
  } catch (error) {
    throw new UnprocessableError("The wavefront does not fit this version's Zernike set; see issues.", [{ path, message: (error as Error).message }]);
  }
}

/** A coefficient vector in the model's Noll order as a wavefront in the model's own ordering. */
export function wavefrontOf(model: SurrogateModel, coefficientsNm: ArrayLike<number>): Wavefront {
  const coefficients: Record<string, number> = {};
  model.nollIndices.forEach((noll, k) => (coefficients[String(model.zernike.ordering === "ansi" ? nollToAnsi(noll) : noll)] = coefficientsNm[k]));
  return { ordering: model.zernike.ordering, coefficientsNm: coefficients };
}

function nested(flat: ArrayLike<number>, offset: number, M: number): number[][] {
  return Array.from({ length: M }, (_, iy) => Array.from({ length: M }, (_, ix) => flat[offset + iy * M + ix]));
}

function maps(flat: ArrayLike<number>, M: number): { x: number[][]; y: number[][] } {
  return { x: nested(flat, 0, M), y: nested(flat, M * M, M) };
}

function nodeOf(head: AnalysisHead, output: number, M: number) {
  const node = output % (M * M);
  return { thetaXNrad: head.thetaNrad[node % M], thetaYNrad: head.thetaNrad[Math.floor(node / M)], axis: (output < M * M ? "x" : "y") as "x" | "y", node };
}

function modelMap(model: SurrogateModel, coefficientsNm: ArrayLike<number>): Float64Array {
  const out = new Float64Array(2 * model.pointsPerAxis ** 2);
  evaluateInto(model, coefficientsNm, out);
  checkFinite(out);
  return out;
}

function peakOf(map: Float64Array): number {
  let peak = 0;
  for (let p = 0; p < map.length; p++) peak = Math.max(peak, Math.abs(map[p]));
  return peak;
}

/**
 * Worst case for a WFE budget (API.md "Analysis"): the simple bound and the exact maximum of the quadratic model on
 * the ball per node and axis, the worst node, and the maximising wavefront, which reaches the reported value on the
 * model. With a jitter, the length noise of that wavefront at that node.
 */
export async function worstCaseAnalysis(actor: Actor, slug: string, version: number, body: WorstCaseBody, options: { pool: Pool }) {
  const { model, head } = await analysisTarget(actor, slug, version);
  const began = performance.now();
  const result = await analyse(options.pool, model, { kind: "worst-case", budgetRmsNm: body.budgetRmsNm });
  const M = model.pointsPerAxis;
  const at = nodeOf(head, result.worstOutput, M);
  const map = modelMap(model, result.worstCoefficientsNm);
  const cx = map[at.node];
  const cy = map[M * M + at.node];
  const warnings = result.budgetRmsNm > model.validity.maxTotalRmsNm
    ? [`The budget of ${result.budgetRmsNm} nm RMS is beyond the largest total RMS this version was fitted and validated on (${model.validity.maxTotalRmsNm.toFixed(1)} nm).`]
    : [];
  const wavefrontWarnings = validityWarnings(model.validity, result.worstCoefficientsNm);
  return {
    ...head,
    budgetRmsNm: body.budgetRmsNm,
    jitterNrad: body.jitterNrad ?? null,
    boundPmPerNrad: maps(result.bound, M),
    exactPmPerNrad: maps(result.exact, M),
    worst: {
      valuePmPerNrad: result.worstValue,
      signedValuePmPerNrad: result.worstSign * result.worstValue,
      lengthNoisePm: body.jitterNrad === undefined ? null : body.jitterNrad * Math.hypot(cx, cy),
      thetaXNrad: at.thetaXNrad,
      thetaYNrad: at.thetaYNrad,
      axis: at.axis,
      boundPmPerNrad: result.bound[result.worstOutput],
      solution: result.worstKind,
      totalRmsNm: Math.hypot(...result.worstCoefficientsNm),
      wavefront: wavefrontOf(model, result.worstCoefficientsNm),
      ttlAtNodePmPerNrad: { x: cx, y: cy },
    },
    peakBoundPmPerNrad: Math.max(...result.bound),
    hardCases: result.hardCases,
    computeMs: Math.round(performance.now() - began),
    validity: { inRange: warnings.length === 0 && wavefrontWarnings.length === 0, warnings: [...warnings, ...wavefrontWarnings] },
    notice: SURROGATE_NOTICE,
  };
}

/** Coupling modes of a version, strongest first, with a wavefront's split by mode when one is given. */
export async function modesAnalysis(actor: Actor, slug: string, version: number, body: ModesBody, options: { pool: Pool }) {
  const { model, head } = await analysisTarget(actor, slug, version);
  const coefficients = body.wavefront ? vectorOf(model, body.wavefront, "wavefront.coefficientsNm") : null;
  const modes = await analyse(options.pool, model, { kind: "modes" });
  const M = model.pointsPerAxis;
  const projection = coefficients ? projectOntoModes(modes, coefficients, model.nollIndices) : null;
  return {
    ...head,
    modes: modes.map((mode, k) => ({
      singularValue: mode.singularValue,
      coefficientsNm: wavefrontOf(model, mode.coefficients).coefficientsNm,
      ttlPmPerNrad: maps(mode.map, M),
      ...(projection
        ? { projection: { amplitudeNm: projection.amplitudesNm[k], energyFraction: projection.energyFraction[k], peakPmPerNrad: projection.peakPmPerNrad[k] } }
        : {}),
    })),
    ordering: model.zernike.ordering,
    notice: SURROGATE_NOTICE,
  };
}

/**
 * Correction of a known wavefront by adjusting some terms within a per-term limit (a box `|d_k| <= limitNm`),
 * minimising the worst |TTL| over the map on the model; never worse than no adjustment.
 */
export async function correctionAnalysis(actor: Actor, slug: string, version: number, body: CorrectionBody, options: { pool: Pool }) {
  const { model, head } = await analysisTarget(actor, slug, version);
  const coefficients = vectorOf(model, body.wavefront, "wavefront.coefficientsNm");
  const adjustable = adjustablePositions(model, body.adjustable);
  const result = await analyse(options.pool, model, { kind: "correction", coefficientsNm: Array.from(coefficients), adjustable, limitNm: body.limitNm });
  const M = model.pointsPerAxis;
  const adjustment: Record<string, number> = {};
  body.adjustable.indices.forEach((index, k) => (adjustment[String(index)] = result.adjustmentNm[adjustable[k]]));
  const before = modelMap(model, coefficients);
  const after = modelMap(model, result.correctedNm);
  return {
    ...head,
    adjustmentNm: adjustment,
    adjustableOrdering: body.adjustable.ordering,
    limitNm: body.limitNm,
    limitKind: "per-term" as const,
    corrected: wavefrontOf(model, result.correctedNm),
    before: { peakAbsTtlPmPerNrad: peakOf(before), ttlPmPerNrad: maps(before, M) },
    after: { peakAbsTtlPmPerNrad: peakOf(after), ttlPmPerNrad: maps(after, M) },
    iterations: result.iterations,
    validity: { inRange: validityWarnings(model.validity, result.correctedNm).length === 0, warnings: validityWarnings(model.validity, result.correctedNm) },
    notice: SURROGATE_NOTICE,
  };
}

function adjustablePositions(model: SurrogateModel, set: ZernikeSet): number[] {
  let noll: number[];
  try {
    noll = toNollIndices(set);
  } catch (error) {
    throw new UnprocessableError("The adjustable terms cannot be read; see issues.", [{ path: "adjustable.indices", message: (error as Error).message }]);
  }
  const issues = noll
    .map((j, k) => ({ j, k }))
    .filter(({ j }) => !model.nollIndices.includes(j))
    .map(({ k }) => ({ path: `adjustable.indices.${k}`, message: `${set.ordering} term ${set.indices[k]} is not in this version's Zernike set` }));
  if (issues.length > 0) throw new UnprocessableError("Some adjustable terms are not in this version's Zernike set; see issues.", issues);
  return noll.map((j) => model.nollIndices.indexOf(j));
}

/**
 * Noise budget: the TTL noise ASD `sqrt(c_x^2 + c_y^2) ASD_theta(f)` of a wavefront at a DC offset (bicubic between
 * nodes) or at the worst node for it, against an allocation, with the margin in dB at every jitter frequency.
 */
export async function noiseAnalysis(actor: Actor, slug: string, version: number, body: NoiseBody) {
  const { model, head } = await analysisTarget(actor, slug, version);
  const coefficients = vectorOf(model, body.wavefront, "wavefront.coefficientsNm");
  const M = model.pointsPerAxis;
  const h = model.setup.farField.halfAngleNrad;
  const map = modelMap(model, coefficients);
  let offset: [number, number];
  let cx: number;
  let cy: number;
  if (body.offsetNrad === null) {
    const node = worstNoiseNode(map.subarray(0, M * M), map.subarray(M * M));
    offset = [head.thetaNrad[node % M], head.thetaNrad[Math.floor(node / M)]];
    cx = map[node];
    cy = map[M * M + node];
  } else {
    offset = body.offsetNrad;
    if (Math.abs(offset[0]) > h || Math.abs(offset[1]) > h) {
      throw new UnprocessableError("The offset is outside the map.", [{ path: "offsetNrad", message: `offset (${offset[0]}, ${offset[1]}) nrad is outside the map (|theta| <= ${h} nrad)` }]);
    }
    cx = interpolateMap(map.subarray(0, M * M), h, M, offset[0], offset[1]);
    cy = interpolateMap(map.subarray(M * M), h, M, offset[0], offset[1]);
  }
  let budget;
  try {
    budget = noiseBudget(cx, cy, body.jitterAsd as Spectrum, body.allocation as Spectrum);
  } catch (error) {
    throw new UnprocessableError("The noise budget cannot be made; see issues.", [{ path: "allocation", message: (error as Error).message }]);
  }
  const warnings = validityWarnings(model.validity, coefficients);
  return {
    ...head,
    offsetNrad: offset,
    worstOffset: body.offsetNrad === null,
    ttlXPmPerNrad: cx,
    ttlYPmPerNrad: cy,
    ...budget,
    validity: { inRange: warnings.length === 0, warnings },
    notice: SURROGATE_NOTICE,
  };
}

/**
 * Fit a measured height map (`.npy` or CSV grid) with a Zernike set by least squares over the aperture. `read` gives
 * the file and the form's fields; it is called only once the actor may fit (so a refusal never depends on the body).
 */
export async function fitHeightMap(actor: Actor, read: () => Promise<{ bytes: Uint8Array; fields: FitFields }>, options: { pool: Pool }) {
  assertCan(actor, "read");
  const { bytes, fields } = await read();
  let grid;
  try {
    grid = readHeightMap(bytes);
  } catch (error) {
    if (error instanceof HeightMapError) throw new UnprocessableError(error.message, [{ path: "file", message: error.message }]);
    throw error;
  }
  const noll = toNollIndices(fields.zernike as ZernikeSet);
  const fit = await analyse(options.pool, null, {
    kind: "fit",
    map: { values: grid.values, rows: grid.rows, cols: grid.cols, pixelSizeM: fields.pixelSizeM, apertureDiameterM: fields.apertureDiameterM, units: fields.units },
    nollIndices: noll,
  });
  const coefficients: Record<string, number> = {};
  fields.zernike.indices.forEach((index, k) => (coefficients[String(index)] = fit.coefficientsNm[k]));
  const toNm = fields.units === "m" ? 1e9 : 1;
  const picture = (values: ArrayLike<number>) => resampleToPupil(values, grid.rows, grid.cols, fields.pixelSizeM, fields.apertureDiameterM);
  // The pixels the fit used (centre inside the aperture, with data): the same in all three pictures.
  const measured = picture(Float64Array.from(grid.values, (h, i) => (Number.isFinite(fit.fitNm[i]) ? h * toNm : Number.NaN)));
  const removed: Record<string, number> = {};
  for (const [noll1, value] of Object.entries(fit.removedNm)) removed[String(fields.zernike.ordering === "ansi" ? nollToAnsi(Number(noll1)) : Number(noll1))] = value;
  return {
    wavefront: { ordering: fields.zernike.ordering, coefficientsNm: coefficients },
    removedNm: removed,
    residualRmsNm: fit.residualRmsNm,
    mapRmsNm: fit.mapRmsNm,
    samplesInAperture: fit.samplesInAperture,
    rows: grid.rows,
    cols: grid.cols,
    format: grid.format,
    pictures: {
      samples: measured.samples,
      mapNm: pictureValues(measured.values),
      fitNm: pictureValues(picture(fit.fitNm).values),
      residualNm: pictureValues(picture(fit.residualNm).values),
    },
  };
}

/** A picture's cells for JSON: 6 significant digits (it is drawn, not fitted), null where the fit used no pixel. */
function pictureValues(values: Float64Array): (number | null)[] {
  return Array.from(values, (v) => (Number.isFinite(v) ? Number(v.toPrecision(6)) : null));
}

