import { existsSync } from "node:fs";
import { availableParallelism } from "node:os";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";
import { Piscina } from "piscina";
import { requireFiniteCoefficients } from "../optics/checks.ts";
import { validateSetup } from "../optics/setup.ts";
import type { FlatTtlMaps, OpticalSetup } from "../optics/types.ts";
import { requireNollIndices } from "../optics/zernike.ts";
import { checkCoefficients, checkFinite, MAP_SUMMARY_WIDTH } from "../surrogate/evaluate.ts";
import type { AnalysisRequest, AnalysisResult } from "../surrogate/analysis.ts";
import type { SurrogateModel } from "../surrogate/model.ts";
import type { ComputeTask, SharedModel } from "./computeTask.ts";
import { runTtlTask, type TtlTask, type TtlTaskResult } from "./ttlTask.ts";

/** Progress, cancellation and chunking of one exact propagation. */
export interface PropagationOptions {
  /** Called after each finished chunk with the number of maps done so far. */
  onProgress?: (done: number, total: number) => void;
  /** Cancels the work; the promise then rejects with an AbortError. */
  signal?: AbortSignal;
  /** Wavefronts per task sent to a worker (default: enough chunks for smooth progress, at most 64). */
  chunkSize?: number;
}

/**
 * A long-lived pool of worker threads (piscina) for the two heavy computations: exact propagation and batched
 * surrogate evaluation. One per process (the CLI, the queue worker, the web server); never blocks the calling
 * thread. Every worker runs the same core functions, so results are bit-for-bit the single-thread ones.
 */
export interface ComputePool {
  readonly threads: number;
  /**
   * Exact TTL maps of `S` wavefronts on one setup.
   * @param coefficientsNm `S x J` row-major, in the order of `nollIndices`, nm RMS
   * @returns flat maps `x[s * M^2 + iy * M + ix]` (pm/nrad) with their undefined nodes
   * @throws RangeError / TypeError for an invalid setup, index list or coefficient, before any work starts
   */
  propagate(
    setup: OpticalSetup, nollIndices: readonly number[], coefficientsNm: Float64Array, options?: PropagationOptions,
  ): Promise<FlatTtlMaps>;
  /**
   * Surrogate maps of `S` wavefronts, row-major `S x 2 M^2` (`[c_x map, c_y map]` each), pm/nrad, the rows
   * shared out over the threads. The model's coefficients go to shared memory once per model object.
   * @param coefficientsNm `S x J` row-major in the model's Noll order, nm RMS
   * @throws RangeError as `checkCoefficients`, and when the result overflows (`checkFinite`)
   */
  evaluateBatch(model: SurrogateModel, coefficientsNm: ArrayLike<number>): Promise<Float64Array>;
  /**
   * Peak |TTL| of each of `S` wavefronts (`evaluateBatchPeaksInto`), pm/nrad, the rows shared out over the threads.
   * @throws RangeError as `checkCoefficients`, and when a peak overflows
   */
  evaluatePeaks(model: SurrogateModel, coefficientsNm: ArrayLike<number>): Promise<Float64Array>;
  /**
   * One analysis of lib/surrogate/analysis.ts on a worker thread (the model's coefficients shared as for
   * `evaluateBatch`); the same result as `runAnalysis` on this thread.
   * @throws RangeError from the analysis
   */
  analyse<R extends AnalysisRequest>(model: SurrogateModel | null, request: R): Promise<AnalysisResult<R>>;
  /**
   * What {@link summariseMapsInto} reports of each wavefront's maps (`S x 4`: peak, its node and axis, the largest
   * `c_x^2 + c_y^2`), made in the workers, so that the maps never reach the calling thread.
   * @throws {RangeError} as `evaluateBatch`, and when a map is not finite
   */
  summariseBatch(model: SurrogateModel, coefficientsNm: ArrayLike<number>): Promise<Float64Array>;
  /** Stop the workers (waits for running tasks to end). */
  close(): Promise<void>;
}

/**
 * The worker entry beside this module; when this module was bundled elsewhere (a built Next server), the
 * source tree's copy under the working directory (the web server and the CLI run from the project root).
 */
function workerFile(): string {
  const beside = fileURLToPath(new URL("./computeWorker.mjs", import.meta.url));
  if (existsSync(beside) && existsSync(join(dirname(beside), "computeTask.ts"))) return beside;
  return join(process.cwd(), "lib", "parallel", "computeWorker.mjs");
}

/** Positive integer thread count, default all cores. */
function threadCount(threads: number | undefined): number {
  const count = threads ?? availableParallelism();
  if (!Number.isInteger(count) || count < 1) throw new RangeError("threads must be a positive integer");
  return count;
}

/** The checked inputs and task list of one propagation, shared by the pool and the single-thread path. */
function planPropagation(
  setup: OpticalSetup, nollIndices: readonly number[], coefficientsNm: Float64Array, threads: number, chunkSize?: number,
) {
  const clean = validateSetup(setup);
  const indices = requireNollIndices(nollIndices, "nollIndices");
  const count = requireFiniteCoefficients(coefficientsNm, indices, true);
  const terms = indices.length;
  const m = clean.farField.pointsPerAxis;
  const nodes = m * m;
  const chunk = chunkSize ?? Math.max(1, Math.min(64, Math.ceil(count / (threads * 8))));
  if (!Number.isInteger(chunk) || chunk < 1) throw new RangeError("chunkSize must be a positive integer");
  const tasks: TtlTask[] = [];
  for (let start = 0; start < count; start += chunk) {
    const size = Math.min(chunk, count - start);
    tasks.push({ setup: clean, nollIndices: indices, coefficientsNm: coefficientsNm.slice(start * terms, (start + size) * terms), count: size });
  }
  const x = new Float64Array(count * nodes);
  const y = new Float64Array(count * nodes);
  const undefinedByTask: number[][] = tasks.map(() => []);
  let done = 0;
  return {
    tasks,
    nodes,
    collect(index: number, result: TtlTaskResult, onProgress?: (done: number, total: number) => void) {
      x.set(result.x, index * chunk * nodes);
      y.set(result.y, index * chunk * nodes);
      for (const node of result.undefinedNodes) undefinedByTask[index].push(index * chunk * nodes + node);
      done += tasks[index].count;
      onProgress?.(done, count);
    },
    result(): FlatTtlMaps {
      return { pointsPerAxis: m, count, x, y, undefinedNodes: Int32Array.from(undefinedByTask.flat()) };
    },
  };
}

/** Exact maps on the calling thread, yielding between chunks so that progress and cancellation get through. */
export async function propagateHere(
  setup: OpticalSetup, nollIndices: readonly number[], coefficientsNm: Float64Array, options: PropagationOptions = {},
): Promise<FlatTtlMaps> {
  const plan = planPropagation(setup, nollIndices, coefficientsNm, 1, options.chunkSize);
  for (let i = 0; i < plan.tasks.length; i++) {
    options.signal?.throwIfAborted();
    plan.collect(i, runTtlTask(plan.tasks[i]), options.onProgress);
    await new Promise((resolve) => setImmediate(resolve));
  }
  return plan.result();
}

/**
 * Start a compute pool.
 * @param options.threads worker threads (default: all cores)
 * @param options.niceIncrement how much lower the threads' scheduling priority is than the process's (Unix nice,
 *   per thread): a server gives its pool 10, so that the thread answering requests runs first whenever both want a
 *   core, and a large batch takes what is left.
 * @throws RangeError "threads must be a positive integer"
 */
export function createComputePool(options: { threads?: number; niceIncrement?: number } = {}): ComputePool {
  const threads = threadCount(options.threads);
  const pool = new Piscina({ filename: workerFile(), minThreads: threads, maxThreads: threads, idleTimeout: 60_000, niceIncrement: options.niceIncrement ?? 0 });
  const sharedModels = new WeakMap<SurrogateModel, SharedModel>();
  let nextModelKey = 0;

  const sharedModel = (model: SurrogateModel): SharedModel => {
    let shared = sharedModels.get(model);
    if (!shared) {
      const coefficients = new SharedArrayBuffer(Math.max(8, model.coefficients.byteLength));
      new Float64Array(coefficients, 0, model.coefficients.length).set(model.coefficients);
      const { terms, nollIndices, pointsPerAxis } = model;
      shared = { key: nextModelKey++, header: { terms, nollIndices, pointsPerAxis }, coefficients };
      sharedModels.set(model, shared);
    }
    return shared;
  };
  /** Rows shared out between the threads; the output is the maps, or with `summary` their summaries. */
  const runEvaluation = async (model: SurrogateModel, coefficientsNm: ArrayLike<number>, summary: boolean): Promise<Float64Array> => {
    const samples = checkCoefficients(model, coefficientsNm, true);
    const width = summary ? MAP_SUMMARY_WIDTH : 2 * model.pointsPerAxis * model.pointsPerAxis;
    return sharedRows("evaluate", model, coefficientsNm, samples, width, summary);
  };

  /** Rows of a batch shared out over the threads, input and `samples x width` output in shared memory. */
  const sharedRows = async (kind: "evaluate" | "peaks", model: SurrogateModel, coefficientsNm: ArrayLike<number>, samples: number, width: number, summary = false) => {
    const shared = sharedModel(model);
    const input = new SharedArrayBuffer(Math.max(8, coefficientsNm.length * 8));
    new Float64Array(input, 0, coefficientsNm.length).set(coefficientsNm);
    const output = new SharedArrayBuffer(Math.max(8, samples * width * 8));
    const share = Math.ceil(samples / threads);
    const jobs: Promise<unknown>[] = [];
    for (let rowStart = 0; rowStart < samples; rowStart += share) {
      const task: ComputeTask = {
        kind, summary, model: shared, input, inputLength: coefficientsNm.length, output, outputLength: samples * width,
        rowStart, rowEnd: Math.min(samples, rowStart + share),
      };
      jobs.push(pool.run(task));
    }
    await Promise.all(jobs);
    return new Float64Array(output, 0, samples * width);
  };

  return {
    threads,

    async propagate(setup, nollIndices, coefficientsNm, propagation = {}) {
      const plan = planPropagation(setup, nollIndices, coefficientsNm, threads, propagation.chunkSize);
      const { signal, onProgress } = propagation;
      signal?.throwIfAborted();
      // Cancellation stops handing out chunks and rejects at once; chunks already running finish on their
      // worker and are dropped (killing a worker mid-task would cost a restart and races piscina's bookkeeping).
      // Two chunks per thread in flight keep every worker busy across the round trips.
      await new Promise<void>((resolve, reject) => {
        let next = 0, inFlight = 0, finished = 0, stopped = false;
        const stop = (error: unknown) => {
          if (stopped) return;
          stopped = true;
          signal?.removeEventListener("abort", onAbort);
          reject(error);
        };
        const onAbort = () => stop(signal!.reason);
        signal?.addEventListener("abort", onAbort, { once: true });
        const launch = () => {
          while (!stopped && inFlight < 2 * threads && next < plan.tasks.length) {
            const i = next++;
            const task = plan.tasks[i];
            inFlight++;
            pool.run({ kind: "ttl", ...task } satisfies ComputeTask).then(
              (all: Float64Array) => {
                inFlight--;
                if (stopped) return;
                const size = task.count * plan.nodes;
                plan.collect(i, { x: all.subarray(0, size), y: all.subarray(size, 2 * size), undefinedNodes: Array.from(all.subarray(2 * size)) }, onProgress);
                if (++finished === plan.tasks.length) {
                  stopped = true;
                  signal?.removeEventListener("abort", onAbort);
                  resolve();
                } else {
                  launch();
                }
              },
              (error: unknown) => {
                inFlight--;
                stop(error);
              },
            );
          }
        };
        launch();
      });
      return plan.result();
    },

    async evaluateBatch(model, coefficientsNm) {
      const out = await runEvaluation(model, coefficientsNm, false);
      checkFinite(out);
      return out;
    },

    async evaluatePeaks(model, coefficientsNm) {
      const samples = checkCoefficients(model, coefficientsNm, true);
      const out = await sharedRows("peaks", model, coefficientsNm, samples, 1);
      checkFinite(out);
      return out;
    },

    async analyse(model, request) {
      return pool.run({ kind: "analysis", model: model ? sharedModel(model) : null, request } satisfies ComputeTask);
    },

    async summariseBatch(model, coefficientsNm) {
      const out = await runEvaluation(model, coefficientsNm, true);
      for (let s = 0; s < out.length; s += MAP_SUMMARY_WIDTH) {
        if (Number.isNaN(out[s])) throw new RangeError("wavefront coefficients are too large: the surrogate TTL is not finite");
      }
      return out;
    },

    async close() {
      await pool.close();
    },
  };
}
