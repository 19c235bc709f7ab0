import { availableParallelism } from "node:os";
import { fileURLToPath } from "node:url";
import { Piscina } from "piscina";
import { requireFiniteCoefficients } from "../optics/checks.ts";
import { validateSetup } from "../optics/setup.ts";
import type { FlatTtlMaps, OpticalSetup } from "../optics/types.ts";
import { runTtlTask, type TtlTask, type TtlTaskResult } from "./ttlTask.ts";

export interface PropagateOptions {
  /** Worker threads to use; 1 computes on the calling thread. Default: all cores. */
  threads?: number;
  /** Called after each finished chunk with the number of maps done so far. */
  onProgress?: (done: number, total: number) => void;
  /** Cancels the work; the promise then rejects with an AbortError. */
  signal?: AbortSignal;
  /** Wavefronts per task sent to a worker (default: enough chunks for smooth progress). */
  chunkSize?: number;
}

const WORKER_FILE = fileURLToPath(new URL("./ttlWorker.mjs", import.meta.url));

/**
 * Exact TTL maps of many wavefronts on one setup, spread over worker threads.
 * Every thread runs the same {@link runTtlTask}, so the maps are bit-for-bit those
 * of the single-thread path.
 * @param coefficientsNm S x J coefficients, row-major, in the order of `nollIndices` (nm RMS)
 * @returns flat maps: `x[s * M^2 + iy * M + ix]` (pm/nrad)
 * @throws RangeError / TypeError for an invalid setup, index or coefficient (before any work starts;
 *   coefficients as {@link requireFiniteCoefficients}).
 */
export async function propagateMany(
  setup: OpticalSetup,
  nollIndices: readonly number[],
  coefficientsNm: Float64Array,
  options: PropagateOptions = {},
): Promise<FlatTtlMaps> {
  const clean = validateSetup(setup);
  const terms = nollIndices.length;
  const count = requireFiniteCoefficients(coefficientsNm, nollIndices, true);
  const m = clean.farField.pointsPerAxis;
  const nodes = m * m;
  const threads = Math.max(1, Math.min(options.threads ?? availableParallelism(), count));
  const chunk = options.chunkSize ?? Math.max(1, Math.min(64, Math.ceil(count / (threads * 8))));
  const x = new Float64Array(count * nodes);
  const y = new Float64Array(count * nodes);
  const tasks: TtlTask[] = [];
  for (let start = 0; start < count; start += chunk) {
    const size = Math.min(chunk, count - start);
    tasks.push({
      setup: clean,
      nollIndices: [...nollIndices],
      coefficientsNm: coefficientsNm.slice(start * terms, (start + size) * terms),
      count: size,
    });
  }
  let done = 0;
  const undefinedByTask: number[][] = tasks.map(() => []);
  const collect = (index: number, result: TtlTaskResult) => {
    x.set(result.x, index * chunk * nodes);
    y.set(result.y, index * chunk * nodes);
    for (const node of result.undefinedNodes) undefinedByTask[index].push(index * chunk * nodes + node);
    done += tasks[index].count;
    options.onProgress?.(done, count);
  };
  const result = (): FlatTtlMaps => ({ pointsPerAxis: m, count, x, y, undefinedNodes: Int32Array.from(undefinedByTask.flat()) });

  if (threads === 1) {
    for (let i = 0; i < tasks.length; i++) {
      options.signal?.throwIfAborted();
      collect(i, runTtlTask(tasks[i]));
      await new Promise((resolve) => setImmediate(resolve)); // let progress and cancellation through
    }
    return result();
  }

  const pool = new Piscina({ filename: WORKER_FILE, minThreads: threads, maxThreads: threads, idleTimeout: 1000 });
  try {
    await Promise.all(
      tasks.map((task, i) =>
        pool.run(task, { signal: options.signal ?? null }).then((all: Float64Array) => {
          const size = task.count * nodes;
          collect(i, { x: all.subarray(0, size), y: all.subarray(size, 2 * size), undefinedNodes: Array.from(all.subarray(2 * size)) });
        }),
      ),
    );
  } finally {
    await pool.destroy();
  }
  return result();
}
