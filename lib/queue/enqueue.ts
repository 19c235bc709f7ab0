import { FlowProducer, Queue } from "bullmq";
import { ServiceUnavailableError } from "../errors.ts";
import { queuePrefix, redisConnection, WORK_QUEUE } from "./connection.ts";
import { chunkJobs, monteCarloJobs, type ChunkJob, type MonteCarloRunSpec, type PruningRunSpec, type TrainingRunSpec } from "./plan.ts";

const holder = globalThis as typeof globalThis & { __stillpointFlow?: FlowProducer; __stillpointQueue?: Queue };

function flowProducer(): FlowProducer {
  holder.__stillpointFlow ??= new FlowProducer({ connection: redisConnection("client"), prefix: queuePrefix() });
  return holder.__stillpointFlow;
}

/** The work queue as a client sees it (to inspect or remove jobs). */
export function workQueue(): Queue {
  holder.__stillpointQueue ??= new Queue(WORK_QUEUE, { connection: redisConnection("client"), prefix: queuePrefix() });
  return holder.__stillpointQueue;
}

/** Retries of a chunk whose worker failed (a worker that dies mid-chunk counts as a stall, not an attempt). */
const CHUNK_ATTEMPTS = 3;

/**
 * Queue a training run (or a pruning run, whose chunks propagate its validation set): one job per chunk of exact propagation, which any worker takes, and a `finish` job (the fit,
 * the validation statistics and the new version) that BullMQ releases when every chunk is done. Job ids derive
 * from the run, so queuing the same run twice adds nothing.
 * @throws {ServiceUnavailableError} when Redis cannot be reached
 */
export async function enqueueTrainingRun(runId: number, spec: TrainingRunSpec | PruningRunSpec): Promise<void> {
  await enqueueFlow(runId, "chunk", chunkJobs(runId, spec));
}

/**
 * Queue a Monte Carlo run: one `monte-carlo-chunk` job per share of samples (seeded, so any worker draws the same
 * ones) and the `finish` job (merge, exact propagation of the worst samples, the result).
 * @throws {ServiceUnavailableError} when Redis cannot be reached
 */
export async function enqueueMonteCarloRun(runId: number, spec: MonteCarloRunSpec): Promise<void> {
  await enqueueFlow(runId, "monte-carlo-chunk", monteCarloJobs(runId, spec));
}

async function enqueueFlow(runId: number, childName: string, chunks: ChunkJob[]): Promise<void> {
  const children = chunks.map((chunk) => ({
    name: childName,
    queueName: WORK_QUEUE,
    data: chunk,
    opts: {
      jobId: `run-${runId}-${chunk.sampleSet}-${chunk.index}`,
      attempts: CHUNK_ATTEMPTS,
      backoff: { type: "exponential", delay: 500 },
      failParentOnFailure: true,
      removeOnComplete: true,
      removeOnFail: 100,
    },
  }));
  try {
    await flowProducer().add({
      name: "finish",
      queueName: WORK_QUEUE,
      data: { runId },
      opts: { jobId: `run-${runId}-finish`, attempts: 2, backoff: { type: "fixed", delay: 1000 }, removeOnComplete: true, removeOnFail: 100 },
      children,
    });
  } catch (error) {
    throw new ServiceUnavailableError(`The job queue is not reachable (${(error as Error).message}); the run was not queued.`);
  }
}

export async function closeQueueClients(): Promise<void> {
  await Promise.all([holder.__stillpointFlow?.close(), holder.__stillpointQueue?.close()]);
  holder.__stillpointFlow = undefined;
  holder.__stillpointQueue = undefined;
}
