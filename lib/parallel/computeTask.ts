import type { SurrogateModel } from "../surrogate/model.ts";
import { runAnalysis, type AnalysisRequest } from "../surrogate/analysis.ts";
import { evaluateBatchInto, evaluateBatchPeaksInto, MAP_SUMMARY_WIDTH, summariseMapsInto } from "../surrogate/evaluate.ts";
import { runTtlTask, type TtlTask } from "./ttlTask.ts";

/**
 * A model as the pool hands it to its workers: the fields evaluation reads, and the coefficients in shared
 * memory (put there once per model by the pool, never copied per call). `key` names the model within a pool.
 */
export interface SharedModel {
  key: number;
  header: Pick<SurrogateModel, "terms" | "nollIndices" | "pointsPerAxis">;
  coefficients: SharedArrayBuffer;
}

/**
 * Rows `[rowStart, rowEnd)` of a batch; input `S x J` and output live in shared memory. The output is the maps,
 * `S x 2 M^2`, or with `summary` only what {@link summariseMapsInto} reports of each (`S x 4`).
 */
export interface EvaluateTask {
  summary?: boolean;
  model: SharedModel;
  input: SharedArrayBuffer;
  inputLength: number;
  output: SharedArrayBuffer;
  outputLength: number;
  rowStart: number;
  rowEnd: number;
}

/** An analysis of lib/surrogate/analysis.ts on a shared model (or none, for the fit). */
export interface AnalysisTask {
  model: SharedModel | null;
  request: AnalysisRequest;
}

export type ComputeTask =
  | ({ kind: "ttl" } & TtlTask)
  | ({ kind: "evaluate" } & EvaluateTask)
  | ({ kind: "peaks" } & EvaluateTask)
  | ({ kind: "analysis" } & AnalysisTask);

/** Rows evaluated together for a summary: 64 demo maps are 640 KB. */
const SUMMARY_ROWS = 64;

/** Models seen by this thread, most recently used last; bounded so that a long-lived worker does not grow. */
const models = new Map<number, SurrogateModel>();
const MODELS_KEPT = 16;

function modelFor(shared: SharedModel): SurrogateModel {
  let model = models.get(shared.key);
  if (model) {
    models.delete(shared.key);
  } else {
    // Same object on every call, so the evaluation's per-model caches (compiled terms, packed columns) stay warm.
    model = { ...shared.header, coefficients: new Float64Array(shared.coefficients) } as SurrogateModel;
    if (models.size >= MODELS_KEPT) models.delete(models.keys().next().value!);
  }
  models.set(shared.key, model);
  return model;
}

/**
 * Run one task of the compute pool on this thread. Exact TTL: returns the x maps, the y maps and then the
 * task's undefined node indices (exact small integers) in one buffer. Batched evaluation: writes its rows into
 * the shared output and returns null; peaks likewise (one per wavefront). An analysis returns its result object.
 */
export function runComputeTask(task: ComputeTask): Float64Array | null | unknown {
  if (task.kind === "ttl") {
    const { x, y, undefinedNodes } = runTtlTask(task);
    const all = new Float64Array(x.length + y.length + undefinedNodes.length);
    all.set(x);
    all.set(y, x.length);
    all.set(undefinedNodes, x.length + y.length);
    return all;
  }
  if (task.kind === "analysis") return runAnalysis(task.model ? modelFor(task.model) : null, task.request);
  const input = new Float64Array(task.input, 0, task.inputLength);
  const output = new Float64Array(task.output, 0, task.outputLength);
  const model = modelFor(task.model);
  if (task.kind === "peaks") {
    evaluateBatchPeaksInto(model, input, output, task.rowStart, task.rowEnd);
    return null;
  }
  if (!task.summary) {
    evaluateBatchInto(model, input, output, task.rowStart, task.rowEnd);
    return null;
  }
  // Maps of a few rows at a time in this thread's memory; only their summaries reach the shared output.
  const J = model.nollIndices.length;
  const nodes = model.pointsPerAxis * model.pointsPerAxis;
  const scratch = new Float64Array(SUMMARY_ROWS * 2 * nodes);
  for (let r0 = task.rowStart; r0 < task.rowEnd; r0 += SUMMARY_ROWS) {
    const rows = Math.min(SUMMARY_ROWS, task.rowEnd - r0);
    const maps = scratch.subarray(0, rows * 2 * nodes);
    evaluateBatchInto(model, input.subarray(r0 * J, (r0 + rows) * J), maps);
    summariseMapsInto(maps, nodes, rows, output.subarray(r0 * MAP_SUMMARY_WIDTH, (r0 + rows) * MAP_SUMMARY_WIDTH));
  }
  return null;
}
