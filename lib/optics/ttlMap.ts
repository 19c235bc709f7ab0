import type { TtlMap } from "./types.ts";

/**
 * Nested `[iy][ix]` TTL map (DESIGN.md JSON shape) from flat row-major arrays, reading M^2 values
 * of each from `offset`. Nodes listed in `undefinedNodes` (flat indices, as in FlatTtlMaps) become
 * `null` (PHYSICS.md section 2: the TTL of an exact far-field null is undefined).
 */
export function toTtlMap(
  thetaNrad: ArrayLike<number>, x: Float64Array, y: Float64Array, offset = 0, undefinedNodes: ArrayLike<number> = [],
): TtlMap {
  const m = thetaNrad.length;
  const rows = (flat: Float64Array) => {
    const grid: (number | null)[][] = Array.from({ length: m }, (_, iy) =>
      Array.from(flat.subarray(offset + iy * m, offset + (iy + 1) * m)),
    );
    for (let k = 0; k < undefinedNodes.length; k++) {
      const local = undefinedNodes[k] - offset;
      if (local >= 0 && local < m * m) grid[Math.floor(local / m)][local % m] = null;
    }
    return grid;
  };
  return { thetaNrad: Array.from(thetaNrad), ttlXPmPerNrad: rows(x), ttlYPmPerNrad: rows(y) };
}

/** Largest |c_x| or |c_y| over both maps (pm/nrad); undefined (null) nodes are skipped. */
export function peakAbsTtl(map: TtlMap): number {
  let peak = 0;
  for (const grid of [map.ttlXPmPerNrad, map.ttlYPmPerNrad]) {
    for (const row of grid) for (const value of row) if (value !== null) peak = Math.max(peak, Math.abs(value));
  }
  return peak;
}

/** Where an undefined node sits: map (wavefront) number and grid position. */
export function undefinedNodePosition(flatIndex: number, pointsPerAxis: number): { sample: number; ix: number; iy: number } {
  const nodes = pointsPerAxis * pointsPerAxis;
  const local = flatIndex % nodes;
  return { sample: Math.floor(flatIndex / nodes), ix: local % pointsPerAxis, iy: Math.floor(local / pointsPerAxis) };
}

/**
 * The warning that goes with maps holding undefined nodes, or null when there are none:
 * "TTL undefined at 2 far-field nodes (exact nulls of the far field, reported as null); first: map 0, ix 3, iy 5".
 */
export function undefinedNodesWarning(maps: { pointsPerAxis: number; undefinedNodes: ArrayLike<number> }): string | null {
  const count = maps.undefinedNodes.length;
  if (count === 0) return null;
  const { sample, ix, iy } = undefinedNodePosition(maps.undefinedNodes[0], maps.pointsPerAxis);
  return (
    `TTL undefined at ${count} far-field node${count === 1 ? "" : "s"} (exact nulls of the far field, ` +
    `reported as null); first: map ${sample}, ix ${ix}, iy ${iy}`
  );
}

/**
 * Refuse maps with undefined nodes where a number is needed at every node (fitting a surrogate):
 * returns the maps unchanged when every node is defined.
 * @throws RangeError "<what>: TTL undefined at N far-field nodes (...); a surrogate cannot be trained on them"
 */
export function requireDefinedTtl<T extends { pointsPerAxis: number; undefinedNodes: ArrayLike<number> }>(maps: T, what: string): T {
  const warning = undefinedNodesWarning(maps);
  if (warning !== null) {
    throw new RangeError(`${what}: ${warning}; a surrogate cannot be trained on them (choose other wavefronts or far-field nodes)`);
  }
  return maps;
}
