import { assertCan, type Actor } from "../access/actor.ts";
import { countEvaluation } from "../db/tokens.ts";
import { evaluatesVersionState, evaluationTarget, loadSurrogateById, type EvaluationTarget } from "../db/versions.ts";
import { ForbiddenError, GoneError, NotFoundError, OutsideValidityRangeError, UnprocessableError } from "../errors.ts";
import { thetaGridNrad } from "../optics/setup.ts";
import { wavefrontToVector } from "../optics/wavefront.ts";
import type { ComputePool } from "../parallel/computePool.ts";
import { checkFinite, evaluateInto, MAP_SUMMARY_WIDTH, summariseMapsInto } from "../surrogate/evaluate.ts";
import { interpolateMap } from "../surrogate/interpolate.ts";
import { SURROGATE_NOTICE, type SurrogateModel } from "../surrogate/model.ts";
import { validityWarnings } from "../surrogate/validity.ts";
import { parseEvaluateBody, type EvaluateBody } from "../validation/evaluate.ts";
import { ModelCache } from "./modelCache.ts";

/** Decoded models kept by the web server: 512 MB holds about 80 full demo models (6.2 MB each). */
const holder = globalThis as typeof globalThis & { __stillpointModelCache?: ModelCache };
export function modelCache(): ModelCache {
  holder.__stillpointModelCache ??= new ModelCache(512 * 1024 * 1024);
  return holder.__stillpointModelCache;
}

/** Batches at least this large go to the worker pool; smaller ones are cheaper on the calling thread. */
export const POOL_BATCH_THRESHOLD = 32;
/** Wavefronts summarised between two yields to the event loop. */
const SLICE = 256;

export interface EvaluationResult {
  ttlXPmPerNrad?: number[][];
  ttlYPmPerNrad?: number[][];
  offsets?: { thetaXNrad: number; thetaYNrad: number; ttlXPmPerNrad: number; ttlYPmPerNrad: number }[];
  peakAbsTtlPmPerNrad: number;
  peakAt: { thetaXNrad: number; thetaYNrad: number; axis: "x" | "y" };
  peakLengthNoisePm?: number;
  validity: { inRange: boolean; warnings: string[] };
}

export interface EvaluationAnswer {
  head: { model: string; version: number; state: string; coefficientsSha256: string; thetaNrad: number[] };
  results: EvaluationResult[];
  notice: string;
  /** Deprecation, Sunset and Link for a retired version before its sunset. */
  headers: Record<string, string>;
}

/** RFC 9745 Deprecation, RFC 8594 Sunset and the successor link of a retired version. */
export function retirementHeaders(target: EvaluationTarget): Record<string, string> {
  if (target.state !== "retired" || !target.retiredAt || !target.sunsetAt) return {};
  const headers: Record<string, string> = {
    deprecation: `@${Math.floor(Date.parse(target.retiredAt) / 1000)}`,
    sunset: new Date(target.sunsetAt).toUTCString(),
  };
  if (target.successorVersion !== null) headers.link = `</api/v1/models/${target.model}/versions/${target.successorVersion}>; rel="successor-version"`;
  return headers;
}

/**
 * The version an actor may evaluate: released ones, retired ones until their sunset (410 after), and drafts and
 * versions in review only for signed-in modellers and reviewers.
 */
export async function evaluableTarget(actor: Actor, slug: string, version: number, now: Date): Promise<EvaluationTarget> {
  assertCan(actor, "evaluate", slug);
  const target = await evaluationTarget(slug, version);
  if (!target) throw new NotFoundError(`Model "${slug}" has no version ${version}.`);
  if (!evaluatesVersionState(actor, target.state)) {
    throw new ForbiddenError(
      `Version ${version} is ${target.state}: tokens evaluate released and retired versions; drafts and versions in review only signed-in modellers and reviewers.`,
    );
  }
  if (target.state === "retired" && target.sunsetAt && Date.parse(target.sunsetAt) <= now.getTime()) {
    throw new GoneError(
      `Version ${version} of "${slug}" was retired and its sunset (${target.sunsetAt}) has passed.` +
        (target.successorVersion !== null ? ` Its successor is version ${target.successorVersion}.` : ""),
    );
  }
  return target;
}

export async function surrogateFor(target: EvaluationTarget): Promise<SurrogateModel> {
  return modelCache().get(`${target.versionId}:${target.coefficientsSha256}`, () => loadSurrogateById(target.versionId));
}

function nested(flat: Float64Array, offset: number, M: number): number[][] {
  const rows: number[][] = new Array(M);
  for (let iy = 0; iy < M; iy++) rows[iy] = Array.from(flat.subarray(offset + iy * M, offset + (iy + 1) * M));
  return rows;
}

const yieldToLoop = () => new Promise<void>((resolve) => setImmediate(resolve));

/**
 * Evaluate wavefronts against a pinned version (API.md "Evaluate"): full maps, bicubic values at DC offsets, or the
 * peak only, with the length noise of a pointing jitter and the validity block of each wavefront. Large batches run on
 * the worker pool, and the summaries are made in slices, so the event loop stays free for other requests.
 * @throws {UnprocessableError} naming each wavefront with a term outside the model's set, each offset outside the map;
 *   {OutsideValidityRangeError} with `strict` for a wavefront outside the validity range
 */
export async function evaluateWavefronts(
  actor: Actor,
  slug: string,
  version: number,
  body: EvaluateBody,
  options: { now?: Date; pool?: ComputePool | (() => ComputePool) | null } = {},
): Promise<EvaluationAnswer> {
  const now = options.now ?? new Date();
  const target = await evaluableTarget(actor, slug, version, now);
  const model = await surrogateFor(target);
  const results = await evaluateOnModel(model, body, `version ${version}`, options.pool ?? null);
  if (actor.tokenId !== null) countEvaluation(actor.tokenId, target.versionId, body.wavefronts.length, now);
  return {
    head: { model: slug, version: target.version, state: target.state, coefficientsSha256: target.coefficientsSha256, thetaNrad: Array.from(thetaGridNrad(model.setup.farField)) },
    results,
    notice: SURROGATE_NOTICE,
    headers: retirementHeaders(target),
  };
}

/**
 * The results of an evaluate body on a decoded model (the work of {@link evaluateWavefronts} once the version is
 * known): validity per wavefront, maps on the pool for large batches, summaries in slices between yields.
 * @param label how the strict refusal names the model ("version 2")
 */
export async function evaluateOnModel(model: SurrogateModel, body: EvaluateBody, label: string, poolOption: ComputePool | (() => ComputePool) | null): Promise<EvaluationResult[]> {
  const M = model.pointsPerAxis;
  const nodes = M * M;
  const J = model.nollIndices.length;
  const S = body.wavefronts.length;
  const theta = thetaGridNrad(model.setup.farField);
  const h = model.setup.farField.halfAngleNrad;
  const issues: { path: string; message: string }[] = [];
  const coefficients = new Float64Array(S * J);
  const warnings: string[][] = new Array(S);
  for (let start = 0; start < S; start += SLICE) {
    if (start > 0) await yieldToLoop();
    for (let i = start; i < Math.min(S, start + SLICE); i++) {
      try {
        coefficients.set(wavefrontToVector(body.wavefronts[i], model.nollIndices), i * J);
        warnings[i] = validityWarnings(model.validity, coefficients.subarray(i * J, (i + 1) * J));
      } catch (error) {
        issues.push({ path: `wavefronts.${i}.coefficientsNm`, message: (error as Error).message });
      }
    }
  }
  body.offsetsNrad?.forEach(([tx, ty], k) => {
    if (Math.abs(tx) > h || Math.abs(ty) > h) issues.push({ path: `offsetsNrad.${k}`, message: `offset (${tx}, ${ty}) nrad is outside the map (|theta| <= ${h} nrad)` });
  });
  if (issues.length > 0) throw new UnprocessableError("Some wavefronts or offsets cannot be evaluated on this version; see issues.", issues.slice(0, 100));

  if (body.strict) {
    const outside = warnings.map((w, i) => ({ path: `wavefronts.${i}`, message: w.join("; ") })).filter((issue) => issue.message !== "");
    if (outside.length > 0) {
      throw new OutsideValidityRangeError(`${outside.length} of ${S} wavefronts lie outside the validity range of ${label} (strict).`, outside.slice(0, 100));
    }
  }

  // A summary of a large batch is made in the workers from maps that never leave them; otherwise the maps of every
  // wavefront (row-major S x [c_x map, c_y map]) come here and are summarised slice by slice.
  const pool = poolOption && S >= POOL_BATCH_THRESHOLD ? (typeof poolOption === "function" ? poolOption() : poolOption) : null;
  let maps: Float64Array | null = null;
  let summaries: Float64Array | null = null;
  try {
    if (pool && body.output === "summary") summaries = await pool.summariseBatch(model, coefficients);
    else if (pool) maps = await pool.evaluateBatch(model, coefficients);
    else {
      maps = new Float64Array(S * 2 * nodes);
      for (let i = 0; i < S; i++) evaluateInto(model, coefficients.subarray(i * J, (i + 1) * J), maps.subarray(i * 2 * nodes, (i + 1) * 2 * nodes));
      checkFinite(maps);
    }
  } catch (error) {
    // Coefficients so large that the polynomial overflows: the client's numbers, not a server fault.
    if (error instanceof RangeError) throw new UnprocessableError(`The wavefronts cannot be evaluated: ${error.message}.`);
    throw error;
  }

  const results: EvaluationResult[] = new Array(S);
  const jitter = body.jitterNrad;
  const W = MAP_SUMMARY_WIDTH;
  const slice = new Float64Array(SLICE * W);
  for (let start = 0; start < S; start += SLICE) {
    if (start > 0) await yieldToLoop();
    const count = Math.min(SLICE, S - start);
    let summary: Float64Array;
    if (summaries) summary = summaries.subarray(start * W, (start + count) * W);
    else {
      summariseMapsInto(maps!.subarray(start * 2 * nodes, (start + count) * 2 * nodes), nodes, count, slice);
      summary = slice;
    }
    for (let k = 0; k < count; k++) {
      const i = start + k;
      const peakNode = summary[k * W + 1];
      const result: EvaluationResult = {
        peakAbsTtlPmPerNrad: summary[k * W],
        peakAt: { thetaXNrad: theta[peakNode % M], thetaYNrad: theta[Math.floor(peakNode / M)], axis: summary[k * W + 2] === 0 ? "x" : "y" },
        validity: { inRange: warnings[i].length === 0, warnings: warnings[i] },
      };
      if (jitter !== undefined) result.peakLengthNoisePm = jitter * Math.sqrt(summary[k * W + 3]);
      const base = i * 2 * nodes;
      if (body.output === "map") {
        result.ttlXPmPerNrad = nested(maps!, base, M);
        result.ttlYPmPerNrad = nested(maps!, base + nodes, M);
      } else if (body.output === "offsets") {
        const x = maps!.subarray(base, base + nodes);
        const y = maps!.subarray(base + nodes, base + 2 * nodes);
        result.offsets = body.offsetsNrad!.map(([tx, ty]) => ({
          thetaXNrad: tx,
          thetaYNrad: ty,
          ttlXPmPerNrad: interpolateMap(x, h, M, tx, ty),
          ttlYPmPerNrad: interpolateMap(y, h, M, tx, ty),
        }));
      }
      results[i] = result;
    }
  }
  return results;
}

/**
 * The answer as JSON, written in pieces with a yield between them: a 10,000-map answer is hundreds of MB of text,
 * which one `JSON.stringify` would build in one blocking go.
 */
export function answerBody(answer: EvaluationAnswer): string | ReadableStream<Uint8Array> {
  // A small answer is cheaper as one string than as a stream of pieces.
  if (answer.results.length <= 64) return JSON.stringify({ ...answer.head, results: answer.results, notice: answer.notice });
  return answerStream(answer);
}

export function answerStream(answer: EvaluationAnswer): ReadableStream<Uint8Array> {
  const encoder = new TextEncoder();
  const opening = JSON.stringify(answer.head).slice(0, -1) + ',"results":[';
  let index = 0;
  return new ReadableStream<Uint8Array>({
    start(controller) {
      controller.enqueue(encoder.encode(opening));
    },
    async pull(controller) {
      if (index >= answer.results.length) {
        controller.enqueue(encoder.encode(`],"notice":${JSON.stringify(answer.notice)}}`));
        controller.close();
        return;
      }
      const end = Math.min(answer.results.length, index + 64);
      let text = "";
      for (let i = index; i < end; i++) text += (i > 0 ? "," : "") + JSON.stringify(answer.results[i]);
      index = end;
      controller.enqueue(encoder.encode(text));
      if (index < answer.results.length) await yieldToLoop();
    },
  });
}

/**
 * Load the released versions into the model cache (newest first, as many as the cache holds) and run each through
 * every kind of evaluation once, so that the first request after a restart finds its model decoded and the
 * evaluation path compiled (kernels, validation, interpolation, JSON). Failures are logged, never fatal: requests
 * load on demand.
 */
export async function warmModelCache(listReleased: () => Promise<EvaluationTarget[]>, log: (line: string) => void = console.log): Promise<SurrogateModel[]> {
  const models: SurrogateModel[] = [];
  try {
    const began = performance.now();
    let loaded = 0;
    for (const target of await listReleased()) {
      if (modelCache().bytesUsed > modelCache().maxBytes * 0.8) break;
      const model = await surrogateFor(target);
      for (const output of ["offsets", "map", "summary"] as const) {
        const body = await parseEvaluateBody({
          wavefronts: [{ ordering: "noll", coefficientsNm: { [String(model.nollIndices[0])]: 1 } }],
          output,
          ...(output === "offsets" ? { offsetsNrad: [[0, 0]] } : {}),
          jitterNrad: 1,
        });
        JSON.stringify(await evaluateOnModel(model, body, "warm-up", null));
      }
      models.push(model);
      loaded++;
    }
    if (loaded > 0) log(`[stillpoint] ${loaded} released model versions decoded and evaluated once in ${Math.round(performance.now() - began)} ms`);
  } catch (error) {
    log(`[stillpoint] could not warm the model cache: ${(error as Error).message}`);
  }
  return models;
}

/**
 * Start the worker pool's threads and give them each model once (its coefficients in shared memory, the threads'
 * kernels compiled), so that the first large batch after a restart does not pay for it (seconds on two cores).
 * Failures are logged, never fatal.
 */
export async function warmComputePool(models: readonly SurrogateModel[], pool: ComputePool, log: (line: string) => void = console.log): Promise<void> {
  try {
    const began = performance.now();
    for (const model of models) {
      // Enough rows that every thread gets some.
      const zero = new Float64Array(2 * POOL_BATCH_THRESHOLD * model.nollIndices.length);
      await pool.summariseBatch(model, zero);
      await pool.evaluateBatch(model, zero);
    }
    if (models.length > 0) log(`[stillpoint] compute pool (${pool.threads} threads) ready with ${models.length} models in ${Math.round(performance.now() - began)} ms`);
  } catch (error) {
    log(`[stillpoint] could not warm the compute pool: ${(error as Error).message}`);
  }
}
