import { availableParallelism } from "node:os";
import { Worker } from "node:worker_threads";
import { checkCoefficients, checkFinite, evaluateBatchInto } from "./evaluate.ts";
import type { SurrogateModel } from "./model.ts";

const WORKER_URL = new URL("./batchWorker.mjs", import.meta.url);

/**
 * Batched surrogate evaluation on several threads: the calling thread and `threads - 1` workers each take a
 * contiguous block of wavefronts and run the same blocked product ({@link evaluateBatchInto}) on it. The model's
 * coefficients are shared with the workers once (SharedArrayBuffer); inputs and outputs of each call are shared
 * too, so nothing large is copied between threads. Kept out of `index.ts` so the numerical core itself imports no
 * thread API.
 */
export class BatchEvaluator {
  readonly threads: number;
  private readonly model: SurrogateModel;
  private readonly workers: Worker[] = [];
  private readonly ready: Promise<void>;
  private nextId = 0;
  private readonly pending = new Map<number, { resolve: () => void; reject: (error: Error) => void }>();

  /**
   * @param threads threads to use including the calling one (default: all cores)
   * @throws {RangeError} "threads must be a positive integer"
   */
  constructor(model: SurrogateModel, threads = availableParallelism()) {
    if (!Number.isInteger(threads) || threads < 1) throw new RangeError("threads must be a positive integer");
    this.threads = threads;
    const shared = new SharedArrayBuffer(model.coefficients.byteLength);
    new Float64Array(shared).set(model.coefficients);
    this.model = { ...model, coefficients: new Float64Array(shared) };
    const { coefficients: _omit, ...rest } = this.model;
    const starts: Promise<void>[] = [];
    for (let i = 1; i < threads; i++) {
      const worker = new Worker(WORKER_URL, { workerData: { model: rest, coefficients: shared } });
      worker.unref();
      starts.push(
        new Promise((resolve, reject) => {
          worker.once("error", reject);
          worker.on("message", (message: { ready?: boolean; id?: number; error?: string }) => {
            if (message.ready) return resolve();
            const entry = this.pending.get(message.id!);
            if (!entry) return;
            this.pending.delete(message.id!);
            if (message.error) entry.reject(new RangeError(message.error));
            else entry.resolve();
          });
        }),
      );
      this.workers.push(worker);
    }
    this.ready = Promise.all(starts).then(() => {});
  }

  /**
   * Surrogate maps of `S` wavefronts, row-major `S x 2 M^2` (`[c_x map, c_y map]` each), pm/nrad.
   * @param coefficientsNm row-major `S x J` in the model's Noll order, nm RMS
   * @throws {RangeError} as {@link checkCoefficients}
   */
  async evaluate(coefficientsNm: ArrayLike<number>): Promise<Float64Array> {
    const samples = checkCoefficients(this.model, coefficientsNm, true);
    await this.ready;
    const P = 2 * this.model.pointsPerAxis * this.model.pointsPerAxis;
    const input = new SharedArrayBuffer(Math.max(8, coefficientsNm.length * 8));
    new Float64Array(input, 0, coefficientsNm.length).set(coefficientsNm);
    const output = new SharedArrayBuffer(Math.max(8, samples * P * 8));
    const inputView = new Float64Array(input, 0, coefficientsNm.length);
    const outputView = new Float64Array(output, 0, samples * P);
    const share = Math.ceil(samples / this.threads);
    const jobs = this.workers.map((worker, w) => {
      const rowStart = Math.min(samples, (w + 1) * share);
      const rowEnd = Math.min(samples, (w + 2) * share);
      if (rowEnd <= rowStart) return Promise.resolve();
      const id = this.nextId++;
      return new Promise<void>((resolve, reject) => {
        this.pending.set(id, { resolve, reject });
        worker.postMessage({ id, input, output, rowStart, rowEnd });
      });
    });
    evaluateBatchInto(this.model, inputView, outputView, 0, Math.min(samples, share));
    await Promise.all(jobs);
    checkFinite(outputView);
    return outputView;
  }

  /** Stop the workers. */
  async close(): Promise<void> {
    await Promise.all(this.workers.map((worker) => worker.terminate()));
  }
}
