import { requireNollIndices } from "../optics/zernike.ts";
import type { SampleSet } from "../surrogate/designs.ts";
import type { NpyArray } from "./npy.ts";
import { NpzError, readNpz } from "./npz.ts";

/** What an uploaded generating set must agree with: the model's variables and its far-field grid. */
export interface GeneratingSetTarget {
  /** The model's Noll indices, in the order its coefficient vectors use. */
  nollIndices: readonly number[];
  /** The setup's node angles, nrad. */
  thetaNrad: ArrayLike<number>;
}

/** The limit on inflated members that goes with a file limit: float64 maps compress little, so twice the file. */
export function inflatedLimitFor(maxFileBytes: number): number {
  return 2 * maxFileBytes;
}

function member(arrays: Map<string, NpyArray>, name: string): NpyArray {
  const array = arrays.get(name);
  if (!array) throw new NpzError(`the archive has no member ${name} (it needs noll_indices, theta_nrad, coefficients_nm, ttl_x_pm_per_nrad, ttl_y_pm_per_nrad)`);
  return array;
}

function checkFinite(name: string, array: NpyArray): void {
  for (let i = 0; i < array.data.length; i++) {
    if (!Number.isFinite(array.data[i])) throw new NpzError(`${name} holds NaN or infinity (element ${i})`);
  }
}

/**
 * Read a generating set written by `numpy.savez` or `numpy.savez_compressed` (API.md "Generating sets"), check it
 * against the model, and return it with its columns in the model's Noll order.
 * @throws {NpzError} naming the first thing wrong: a damaged archive, a missing member, a dtype or shape, NaN or
 *   infinity, a grid or an index set that disagrees with the model
 */
export function readGeneratingSetNpz(bytes: Uint8Array, target: GeneratingSetTarget, maxFileBytes: number): SampleSet {
  const arrays = readNpz(bytes, { maxInflatedBytes: inflatedLimitFor(maxFileBytes) });
  const indices = member(arrays, "noll_indices");
  const theta = member(arrays, "theta_nrad");
  const coefficients = member(arrays, "coefficients_nm");
  const ttlX = member(arrays, "ttl_x_pm_per_nrad");
  const ttlY = member(arrays, "ttl_y_pm_per_nrad");

  if (indices.kind !== "int" && indices.kind !== "uint") throw new NpzError(`noll_indices must be an integer array, not ${indices.descr}`);
  if (indices.shape.length !== 1) throw new NpzError(`noll_indices must be one-dimensional (J,), not (${indices.shape.join(", ")})`);
  for (const [name, array] of [["theta_nrad", theta], ["coefficients_nm", coefficients], ["ttl_x_pm_per_nrad", ttlX], ["ttl_y_pm_per_nrad", ttlY]] as const) {
    if (array.kind !== "float") throw new NpzError(`${name} must be float32 or float64, not ${array.descr}`);
  }
  const J = target.nollIndices.length;
  const M = target.thetaNrad.length;
  let given: number[];
  try {
    given = requireNollIndices(indices.data, "noll_indices");
  } catch (error) {
    throw new NpzError((error as Error).message);
  }
  const wanted = new Set(target.nollIndices);
  if (given.length !== J || given.some((j) => !wanted.has(j))) {
    throw new NpzError(`noll_indices (${given.join(", ")}) must be, as a set, the model's Zernike set (Noll ${target.nollIndices.join(", ")})`);
  }
  if (theta.shape.length !== 1 || theta.shape[0] !== M) throw new NpzError(`theta_nrad must have shape (${M},) like the model's far-field grid, not (${theta.shape.join(", ")})`);
  checkFinite("theta_nrad", theta);
  for (let i = 0; i < M; i++) {
    const want = target.thetaNrad[i];
    if (Math.abs(theta.data[i] - want) > 1e-9 * Math.max(1, Math.abs(want))) {
      throw new NpzError(`theta_nrad[${i}] is ${theta.data[i]} but the model's grid has ${want} (relative tolerance 1e-9)`);
    }
  }
  if (coefficients.shape.length !== 2 || coefficients.shape[1] !== J) {
    throw new NpzError(`coefficients_nm must have shape (S, ${J}), not (${coefficients.shape.join(", ")})`);
  }
  const S = coefficients.shape[0];
  if (S < 1) throw new NpzError("coefficients_nm holds no samples");
  for (const [name, array] of [["ttl_x_pm_per_nrad", ttlX], ["ttl_y_pm_per_nrad", ttlY]] as const) {
    if (array.shape.length !== 3 || array.shape[0] !== S || array.shape[1] !== M || array.shape[2] !== M) {
      throw new NpzError(`${name} must have shape (${S}, ${M}, ${M}), not (${array.shape.join(", ")})`);
    }
  }
  checkFinite("coefficients_nm", coefficients);
  checkFinite("ttl_x_pm_per_nrad", ttlX);
  checkFinite("ttl_y_pm_per_nrad", ttlY);

  // Columns into the model's order.
  const column = target.nollIndices.map((j) => given.indexOf(j));
  const coefficientsNm = new Float64Array(S * J);
  for (let s = 0; s < S; s++) for (let k = 0; k < J; k++) coefficientsNm[s * J + k] = coefficients.data[s * J + column[k]];
  return { coefficientsNm, x: ttlX.data, y: ttlY.data, count: S, pointsPerAxis: M };
}
