import { availableParallelism } from "node:os";
import type { FlatTtlMaps, OpticalSetup } from "../optics/types.ts";
import { createComputePool, propagateHere, type PropagationOptions } from "./computePool.ts";

export interface PropagateOptions extends PropagationOptions {
  /** Worker threads to use; 1 computes on the calling thread. Default: all cores. */
  threads?: number;
}

/**
 * Exact TTL maps of many wavefronts on one setup, on a temporary compute pool (or on the calling thread
 * for `threads: 1`). Every thread runs the same `runTtlTask`, so the maps are bit-for-bit those of the
 * single-thread path. A process that propagates repeatedly keeps one `createComputePool()` instead.
 * @param coefficientsNm S x J coefficients, row-major, in the order of `nollIndices` (nm RMS)
 * @returns flat maps: `x[s * M^2 + iy * M + ix]` (pm/nrad), with their undefined nodes
 * @throws RangeError / TypeError for an invalid setup, index or coefficient (before any work starts;
 *   coefficients as `requireFiniteCoefficients`).
 */
export async function propagateMany(
  setup: OpticalSetup,
  nollIndices: readonly number[],
  coefficientsNm: Float64Array,
  options: PropagateOptions = {},
): Promise<FlatTtlMaps> {
  const { threads, ...propagation } = options;
  const terms = Math.max(1, nollIndices.length);
  const count = Math.floor(coefficientsNm.length / terms);
  if (threads === 1 || count <= 1) return propagateHere(setup, nollIndices, coefficientsNm, propagation);
  const pool = createComputePool({ threads: Math.min(threads ?? availableParallelism(), count) });
  try {
    return await pool.propagate(setup, nollIndices, coefficientsNm, propagation);
  } finally {
    await pool.close();
  }
}
