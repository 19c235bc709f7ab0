import { axesAndPairsSize } from "../surrogate/designs.ts";
import type { RandomDesignOptions } from "../surrogate/designs.ts";

/** Samples per chunk of exact propagation: about 0.1 s of work on one thread for the demo setup. */
export const CHUNK_SAMPLES = 32;

export type StoredGeneratingSet =
  | ({ design: "random" } & RandomDesignOptions)
  | { design: "axes-and-pairs"; stepNm: number }
  | { design: "uploaded"; generatingSetId: number };

export type StoredValidationSet = RandomDesignOptions | { design: "uploaded"; generatingSetId: number } | null;

/** A training run's spec as stored with the run: what was asked, and how the exact work is cut into chunks. */
export interface TrainingRunSpec {
  order: 1 | 2;
  generatingSet: StoredGeneratingSet;
  validationSet: StoredValidationSet;
  chunkSamples: number;
  /** Samples of each set that the run propagates itself (0 for an uploaded set). */
  generatingSamples: number;
  validationSamples: number;
}

export interface ChunkJob {
  runId: number;
  sampleSet: "generating" | "validation" | "monte-carlo";
  index: number;
  first: number;
  count: number;
}

export function isUploaded(set: StoredGeneratingSet | StoredValidationSet): set is { design: "uploaded"; generatingSetId: number } {
  return set !== null && "design" in set && set.design === "uploaded";
}

/** Samples a built-in generating set has for J Zernike terms. */
export function generatingSampleCount(set: StoredGeneratingSet, termCountJ: number): number {
  if (set.design === "random") return set.size;
  if (set.design === "axes-and-pairs") return axesAndPairsSize(termCountJ);
  return 0;
}

/** The chunks of exact work of a run, in order. */
export function chunkJobs(runId: number, spec: Pick<TrainingRunSpec, "chunkSamples" | "generatingSamples" | "validationSamples">): ChunkJob[] {
  const jobs: ChunkJob[] = [];
  for (const [sampleSet, samples] of [["generating", spec.generatingSamples], ["validation", spec.validationSamples]] as const) {
    for (let first = 0, index = 0; first < samples; first += spec.chunkSamples, index++) {
      jobs.push({ runId, sampleSet, index, first, count: Math.min(spec.chunkSamples, samples - first) });
    }
  }
  return jobs;
}

/**
 * A pruning run's spec: the parent version, the options of `pruneModel`, and the parent's validation set, propagated
 * exactly in chunks like a training run's so that the pruned draft gets validation statistics of its own.
 */
export interface PruningRunSpec {
  parentVersionId: number;
  parentVersion: number;
  prune: { budgetRmsNm: number; jitterNrad: number; thresholdPm: number };
  validationSet: StoredValidationSet;
  chunkSamples: number;
  generatingSamples: 0;
  validationSamples: number;
}

/** Samples per Monte Carlo chunk job: 32 seeded blocks of 1024, a second or two of work on one thread. */
export const MONTE_CARLO_JOB_SAMPLES = 32 * 1024;

/** A Monte Carlo run's spec: the version, the budget, the limits being verified, and the seeded samples to draw. */
export interface MonteCarloRunSpec {
  versionId: number;
  version: number;
  ttlBudgetPmPerNrad: number;
  budgetRmsNm: number;
  samples: number;
  seed: number;
  limits: "uniform" | "per-term";
  /** The requirement limits (model Noll order, nm) of both allocations; the verified ones are `limits`. */
  uniformLinearNm: number[];
  perTermLinearNm: number[];
  uniformBoundPmPerNrad: number;
  perTermBoundPmPerNrad: number;
  /** The per-term allocation's couplings (pm/nrad per nm) and shares of the TTL budget (pm/nrad), model Noll order. */
  perTermCouplingPmPerNradPerNm: number[];
  perTermSharePmPerNrad: number[];
  zeroWfePeakPmPerNrad: number;
  jobSamples: number;
}

/** The chunk jobs of a Monte Carlo run: `first` is always a multiple of the seeded block size (1024). */
export function monteCarloJobs(runId: number, spec: MonteCarloRunSpec): ChunkJob[] {
  const jobs: ChunkJob[] = [];
  for (let first = 0, index = 0; first < spec.samples; first += spec.jobSamples, index++) {
    jobs.push({ runId, sampleSet: "monte-carlo", index, first, count: Math.min(spec.jobSamples, spec.samples - first) });
  }
  return jobs;
}
