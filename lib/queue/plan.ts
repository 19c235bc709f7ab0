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
  sampleSet: "generating" | "validation";
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
export function chunkJobs(runId: number, spec: TrainingRunSpec): ChunkJob[] {
  const jobs: ChunkJob[] = [];
  for (const [sampleSet, samples] of [["generating", spec.generatingSamples], ["validation", spec.validationSamples]] as const) {
    for (let first = 0, index = 0; first < samples; first += spec.chunkSamples, index++) {
      jobs.push({ runId, sampleSet, index, first, count: Math.min(spec.chunkSamples, samples - first) });
    }
  }
  return jobs;
}
