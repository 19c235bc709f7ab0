import { hostname } from "node:os";
import { UnrecoverableError, Worker, type Job } from "bullmq";
import { getConfig } from "../config/index.ts";
import { loadSampleSet } from "../db/generatingSets.ts";
import { loadModel, type ModelRecord } from "../db/models.ts";
import { appendRunLog, completeRun, failRun, loadRun, loadRunChunks, markRunStarted, storeRunChunk, type RunRecord } from "../db/runs.ts";
import { insertVersion } from "../db/versions.ts";
import { packFloat64, unpackFloat64 } from "../formats/packed.ts";
import type { OpticalSetup } from "../optics/types.ts";
import type { SampleSet } from "../surrogate/designs.ts";
import { encodeModel } from "../surrogate/modelFile.ts";
import { generatingCoefficients, trainSurrogate, validationCoefficients, type GeneratingSetSpec, type ValidationSetSpec } from "../surrogate/train.ts";
import { SOFTWARE_VERSION } from "../version.ts";
import { queuePrefix, redisConnection, WORK_QUEUE } from "./connection.ts";
import { finishMonteCarlo, finishPruning, peaksHere, processMonteCarloChunk, type PeakEvaluator } from "./analysisJobs.ts";
import { isUploaded, type ChunkJob, type TrainingRunSpec } from "./plan.ts";

/** Exact maps of `count` wavefronts (row-major `count x J`), flat `count x M^2` per axis, pm/nrad. */
export type ChunkPropagator = (
  setup: OpticalSetup,
  nollIndices: readonly number[],
  coefficientsNm: Float64Array,
) => Promise<{ x: Float64Array; y: Float64Array; undefinedNodes?: ArrayLike<number> }>;

export interface WorkerOptions {
  /** Jobs taken at once (one per compute thread). */
  concurrency: number;
  propagate: ChunkPropagator;
  /** Peak |TTL| of many wavefronts for Monte Carlo runs (default: on the worker's own thread, a block at a time). */
  evaluatePeaks?: PeakEvaluator;
  /** Where progress lines go (stderr by default). */
  log?: (line: string) => void;
  /** Name of this worker in runs and logs (default host:pid). */
  name?: string;
}

export interface WorkerHandle {
  name: string;
  /** Stop taking work; waits for the jobs in hand to finish unless `force`. */
  close(force?: boolean): Promise<void>;
}

const ACTIVE = new Set(["queued", "running"]);

/** A deterministic failure (bad spec, rank-deficient design): retrying cannot help. */
function isDeterministic(error: unknown): boolean {
  return error instanceof RangeError || error instanceof TypeError;
}

function runSpec(run: RunRecord): TrainingRunSpec {
  return run.spec as unknown as TrainingRunSpec;
}

/** The built-in coefficients of one of a run's sets, regenerated from the seeded spec (cached per run). */
class DesignCache {
  private readonly entries = new Map<string, Float64Array>();

  coefficients(run: RunRecord, model: ModelRecord, sampleSet: "generating" | "validation" | "monte-carlo"): Float64Array {
    const key = `${run.id}:${sampleSet}`;
    let hit = this.entries.get(key);
    if (!hit) {
      const spec = runSpec(run);
      const J = model.nollIndices.length;
      if (sampleSet === "monte-carlo") throw new Error("a Monte Carlo chunk is not a set of exact maps");
      if (sampleSet === "generating") {
        if (isUploaded(spec.generatingSet)) throw new Error("an uploaded generating set is not propagated");
        hit = generatingCoefficients(spec.generatingSet as Exclude<GeneratingSetSpec, { design: "uploaded" }>, J);
      } else {
        if (spec.validationSet === null || isUploaded(spec.validationSet)) throw new Error("this run propagates no validation set");
        hit = validationCoefficients(spec.validationSet, J);
      }
      if (this.entries.size > 16) this.entries.clear();
      this.entries.set(key, hit);
    }
    return hit;
  }

  forget(runId: number): void {
    for (const key of this.entries.keys()) if (key.startsWith(`${runId}:`)) this.entries.delete(key);
  }
}

function sameValues(a: Float64Array, b: Float64Array): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

/**
 * Start a worker on the shared queue: it takes chunks of exact propagation from any run, and the last step of a run
 * (fit, validation statistics, the new draft version) once all its chunks are stored. Any number of workers, on any
 * machines that reach the same Redis and MariaDB, share the work; a worker that dies mid-chunk loses its lock and the
 * chunk goes to another one. Chunks are deterministic (seeded designs, bit-for-bit propagation), so the coefficients
 * do not depend on which worker computed what.
 */
export function startWorker(options: WorkerOptions): WorkerHandle {
  const name = options.name ?? `${hostname()}:${process.pid}`;
  const log = options.log ?? ((line: string) => process.stderr.write(`[worker ${name}] ${line}\n`));
  const designs = new DesignCache();
  const { lockMs } = getConfig().queue;

  async function processChunk(chunk: ChunkJob): Promise<string> {
    const run = await loadRun(chunk.runId);
    if (!run || !ACTIVE.has(run.state)) return "skipped: the run has ended";
    if (await markRunStarted(run.id, name)) await appendRunLog(run.id, `started on ${name}`, "info", name);
    if (chunk.sampleSet === "monte-carlo") return processMonteCarloChunk(run, chunk, name, options.evaluatePeaks ?? peaksHere);
    const model = await loadModel(run.modelSlug);
    if (!model) throw new UnrecoverableError(`model ${run.modelSlug} is gone`);
    const J = model.nollIndices.length;
    const all = designs.coefficients(run, model, chunk.sampleSet);
    const slice = all.subarray(chunk.first * J, (chunk.first + chunk.count) * J);
    const began = performance.now();
    const maps = await options.propagate(model.setup, model.nollIndices, slice);
    const nodes = model.setup.farField.pointsPerAxis ** 2;
    const undefinedAt = maps.undefinedNodes && maps.undefinedNodes.length > 0 ? maps.undefinedNodes[0] : maps.x.findIndex((v, i) => !Number.isFinite(v) || !Number.isFinite(maps.y[i]));
    if (undefinedAt >= 0) {
      throw new UnrecoverableError(
        `the exact TTL is undefined (a far-field null) at a node of ${chunk.sampleSet} set sample ${chunk.first + Math.floor(undefinedAt / nodes)}; a surrogate cannot be fitted to it`,
      );
    }
    const seconds = (performance.now() - began) / 1000;
    const stored = await storeRunChunk(run.id, { sampleSet: chunk.sampleSet, index: chunk.index, first: chunk.first, count: chunk.count, maps: packFloat64([maps.x, maps.y]) }, name);
    if (!stored.stored) return "skipped: the run ended while the chunk was computed";
    await appendRunLog(
      run.id,
      `${chunk.sampleSet} set samples ${chunk.first}-${chunk.first + chunk.count - 1} in ${seconds.toFixed(2)} s; ${stored.done}/${stored.total} exact maps done`,
      "info",
      name,
    );
    return "stored";
  }

  async function assemble(run: RunRecord, model: ModelRecord): Promise<{ generating: SampleSet | null; validation: SampleSet | null }> {
    const spec = runSpec(run);
    const M = model.setup.farField.pointsPerAxis;
    const nodes = M * M;
    const chunks = await loadRunChunks(run.id);
    const build = (sampleSet: "generating" | "validation", samples: number): SampleSet | null => {
      if (samples === 0) return null;
      const x = new Float64Array(samples * nodes);
      const y = new Float64Array(samples * nodes);
      let covered = 0;
      for (const chunk of chunks.filter((c) => c.sampleSet === sampleSet)) {
        const [cx, cy] = unpackFloat64(chunk.maps);
        if (cx.length !== chunk.count * nodes || cy.length !== chunk.count * nodes) throw new Error(`chunk ${chunk.index} of the ${sampleSet} set has the wrong size`);
        x.set(cx, chunk.first * nodes);
        y.set(cy, chunk.first * nodes);
        covered += chunk.count;
      }
      if (covered !== samples) throw new Error(`the ${sampleSet} set has ${covered} of ${samples} exact maps stored`);
      return { coefficientsNm: designs.coefficients(run, model, sampleSet), x, y, count: samples, pointsPerAxis: M };
    };
    return { generating: build("generating", spec.generatingSamples), validation: build("validation", spec.validationSamples) };
  }

  async function finishTraining(runId: number): Promise<string> {
    let run = await loadRun(runId);
    if (!run || !ACTIVE.has(run.state)) return "skipped: the run has ended";
    if (await markRunStarted(run.id, name)) await appendRunLog(run.id, `started on ${name}`, "info", name);
    run = (await loadRun(runId))!;
    const model = await loadModel(run.modelSlug);
    if (!model) throw new UnrecoverableError(`model ${run.modelSlug} is gone`);
    if (run.kind === "monte-carlo") {
      return finishMonteCarlo(run, name, (surrogate, coefficientsNm) => options.propagate(surrogate.setup, surrogate.nollIndices, coefficientsNm));
    }
    const spec = runSpec(run);
    const M = model.setup.farField.pointsPerAxis;
    const computed = await assemble(run, model);
    if (run.kind === "pruning") {
      const outcome = await finishPruning(run, model, name, computed.validation);
      designs.forget(run.id);
      return outcome;
    }

    const generatingSet: GeneratingSetSpec = isUploaded(spec.generatingSet)
      ? { design: "uploaded", set: await loadSampleSet(model.id, spec.generatingSet.generatingSetId, M) }
      : (spec.generatingSet as GeneratingSetSpec);
    const validationSet: ValidationSetSpec | null =
      spec.validationSet === null
        ? null
        : isUploaded(spec.validationSet)
          ? { design: "uploaded", set: await loadSampleSet(model.id, spec.validationSet.generatingSetId, M) }
          : spec.validationSet;

    await appendRunLog(run.id, "all exact maps stored; fitting", "info", name);
    const began = performance.now();
    const result = await trainSurrogate(
      {
        setup: model.setup,
        zernike: model.zernike,
        order: spec.order,
        generatingSet,
        validationSet,
        softwareVersion: SOFTWARE_VERSION,
        createdAt: new Date().toISOString(),
      },
      // The exact maps were computed chunk by chunk; hand them over for the very coefficients they belong to.
      async (_noll, coefficientsNm) => {
        for (const set of [computed.generating, computed.validation]) {
          if (set && sameValues(set.coefficientsNm, coefficientsNm)) return { x: set.x, y: set.y, undefinedNodes: [] };
        }
        throw new Error("training asked for exact maps of wavefronts this run did not plan");
      },
    );
    const file = encodeModel(result.model);
    const seconds = (performance.now() - began) / 1000;
    const stats = result.model.statistics?.overall;
    const written = await completeRun(run.id, name, async (trx) => {
      const { id, version } = await insertVersion(trx, { model, surrogate: result.model, file, createdBy: run.createdBy, runId: run.id });
      return {
        versionId: id,
        result: null,
        message:
          `succeeded: version ${version} (draft), ${result.model.terms.length} terms, fit and statistics in ${seconds.toFixed(1)} s` +
          (stats ? `; validation worst error ${(100 * stats.maxErrorRelativeToPeak).toPrecision(3)} % of peak` : ""),
      };
    });
    designs.forget(run.id);
    return written ? "succeeded" : "skipped: the run ended before its version was written";
  }

  /**
   * A database error's message holds the whole statement, coefficient bytes and all: the run's reason, the job's
   * failure in Redis and the log keep the server's own message only.
   */
  function withoutStatement(error: unknown): unknown {
    const sqlMessage = (error as { sqlMessage?: unknown } | null)?.sqlMessage;
    if (typeof sqlMessage !== "string") return error;
    const clean = new Error(`the database refused the write: ${sqlMessage}`);
    clean.name = (error as Error).name;
    return clean;
  }

  const connection = redisConnection("worker");
  const worker = new Worker(
    WORK_QUEUE,
    async (job: Job) => {
      try {
        if (job.name === "chunk" || job.name === "monte-carlo-chunk") return await processChunk(job.data as ChunkJob);
        if (job.name === "finish") return await finishTraining((job.data as { runId: number }).runId);
        throw new UnrecoverableError(`unknown job ${job.name}`);
      } catch (error) {
        if (isDeterministic(error)) throw new UnrecoverableError((error as Error).message);
        throw withoutStatement(error);
      }
    },
    {
      connection,
      prefix: queuePrefix(),
      concurrency: options.concurrency,
      lockDuration: lockMs,
      stalledInterval: lockMs,
      maxStalledCount: 3,
    },
  );

  worker.on("failed", (job, error) => {
    if (!job) return;
    const runId = (job.data as { runId?: number }).runId;
    const final = error instanceof UnrecoverableError || error.name === "UnrecoverableError" || job.attemptsMade >= (job.opts.attempts ?? 1);
    if (runId === undefined || !final) {
      log(`job ${job.id} failed (attempt ${job.attemptsMade}), will retry: ${error.message}`);
      return;
    }
    log(`run ${runId} failed: ${error.message}`);
    // The database may be what failed: keep trying to record the failure (every 2 s for 5 minutes), so that a run
    // never stays "running" after its last attempt (found by npm run soak during a database outage).
    void (async () => {
      for (let attempt = 1; ; attempt++) {
        try {
          await failRun(runId, error.message, name);
          return;
        } catch (e) {
          if (attempt >= 150) return log(`could not record the failure of run ${runId}: ${(e as Error).message}`);
          await new Promise((resolve) => setTimeout(resolve, 2000));
        }
      }
    })();
  });
  worker.on("error", (error) => log(`queue error: ${error.message}`));

  return {
    name,
    async close(force = false) {
      await worker.close(force);
      connection.disconnect();
    },
  };
}
