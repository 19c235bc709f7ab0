import { TtlPropagator } from "../optics/propagator.ts";
import type { OpticalSetup } from "../optics/types.ts";

export interface TtlTask {
  setup: OpticalSetup;
  nollIndices: number[];
  /** count x J coefficients, row-major, nm RMS. */
  coefficientsNm: Float64Array;
  count: number;
}

export interface TtlTaskResult {
  x: Float64Array;
  y: Float64Array;
  /** Indices `s * M^2 + iy * M + ix` (within this task) where the TTL is undefined (an exact null). */
  undefinedNodes: number[];
}

let cached: { key: string; propagator: TtlPropagator } | null = null;

/** The propagator for a setup and term list, built once per thread and reused while they stay the same. */
export function propagatorFor(setup: OpticalSetup, nollIndices: readonly number[]): TtlPropagator {
  const key = JSON.stringify([setup, nollIndices]);
  if (cached?.key !== key) cached = { key, propagator: new TtlPropagator(setup, nollIndices) };
  return cached.propagator;
}

/** Exact TTL maps of `count` wavefronts, one after the other on this thread. */
export function runTtlTask(task: TtlTask): TtlTaskResult {
  const propagator = propagatorFor(task.setup, task.nollIndices);
  const terms = task.nollIndices.length;
  const nodes = propagator.nodeCount;
  const x = new Float64Array(task.count * nodes);
  const y = new Float64Array(task.count * nodes);
  const undefinedNodes: number[] = [];
  for (let s = 0; s < task.count; s++) {
    propagator.ttlInto(task.coefficientsNm.subarray(s * terms, (s + 1) * terms), x, y, s * nodes, undefinedNodes);
  }
  return { x, y, undefinedNodes };
}
