import type { TtlMap } from "./types.ts";

/**
 * Nested `[iy][ix]` TTL map (DESIGN.md JSON shape) from flat row-major arrays,
 * reading M^2 values of each from `offset`.
 */
export function toTtlMap(thetaNrad: ArrayLike<number>, x: Float64Array, y: Float64Array, offset = 0): TtlMap {
  const m = thetaNrad.length;
  const rows = (flat: Float64Array) =>
    Array.from({ length: m }, (_, iy) => Array.from(flat.subarray(offset + iy * m, offset + (iy + 1) * m)));
  return { thetaNrad: Array.from(thetaNrad), ttlXPmPerNrad: rows(x), ttlYPmPerNrad: rows(y) };
}

/** Largest |c_x| or |c_y| over both maps (pm/nrad). */
export function peakAbsTtl(map: TtlMap): number {
  let peak = 0;
  for (const grid of [map.ttlXPmPerNrad, map.ttlYPmPerNrad]) {
    for (const row of grid) for (const value of row) peak = Math.max(peak, Math.abs(value));
  }
  return peak;
}
