/** Index ordering of Zernike terms: Noll (1976), or the ANSI Z80.28 / ISO 24157 single index. */
export type ZernikeOrdering = "noll" | "ansi";

/** Square grid of far-field DC pointing offsets, `theta_i = -h + 2 h i / (M - 1)`. */
export interface FarFieldGrid {
  halfAngleNrad: number;
  pointsPerAxis: number;
}

/** Optical configuration of one transmitting telescope (DESIGN.md "setup"). */
export interface OpticalSetup {
  wavelengthNm: number;
  apertureDiameterM: number;
  beamRadiusM: number;
  distanceM: number;
  farField: FarFieldGrid;
  pupilSamples: number;
}

export interface ZernikeSet {
  ordering: ZernikeOrdering;
  indices: number[];
}

/** Wavefront error: keys are indices in `ordering`, values nm RMS (unit-RMS Zernike terms). */
export interface Wavefront {
  ordering: ZernikeOrdering;
  coefficientsNm: Record<string, number>;
}

/**
 * TTL coupling map, row-major `[iy][ix]` at `(thetaNrad[ix], thetaNrad[iy])`, in pm/nrad; `null` at
 * a node where the TTL is undefined (an exact far-field null, PHYSICS.md section 2).
 */
export interface TtlMap {
  thetaNrad: number[];
  ttlXPmPerNrad: (number | null)[][];
  ttlYPmPerNrad: (number | null)[][];
}

/**
 * Flat TTL maps: `x[s * M * M + iy * M + ix]`, pm/nrad. Nodes where |E| = 0 have no phase and so no
 * TTL (PHYSICS.md section 2): they are listed in `undefinedNodes` (flat indices as above, ascending)
 * and hold 0 in `x` and `y`, never NaN. Writers emit `null` there; training refuses them.
 */
export interface FlatTtlMaps {
  pointsPerAxis: number;
  count: number;
  x: Float64Array;
  y: Float64Array;
  undefinedNodes: Int32Array;
}
