/** Keys' cubic-convolution kernel with a = -1/2: `W(s) = 1.5|s|^3 - 2.5|s|^2 + 1` (|s| <= 1), `-0.5|s|^3 + 2.5|s|^2 - 4|s| + 2` (1 < |s| < 2). */
function keys(s: number): number {
  const a = Math.abs(s);
  if (a <= 1) return (1.5 * a - 2.5) * a * a + 1;
  if (a < 2) return ((-0.5 * a + 2.5) * a - 4) * a + 2;
  return 0;
}

/** Interpolation weights on one axis: node indices and weights (at most 4 distinct nodes). */
export interface AxisWeights {
  nodes: Int32Array;
  weights: Float64Array;
}

/**
 * Weights of Keys' cubic convolution at `thetaNrad` on the grid `theta_i = -h + 2 h i / (M - 1)`.
 * At the first and last interval the missing outside node is replaced by Keys' boundary condition
 * `f(-1) = 3 f(0) - 3 f(1) + f(2)` (and its mirror), so quadratics are reproduced exactly everywhere.
 *
 * @param thetaNrad DC offset, nrad, within [-h, h]
 * @param halfAngleNrad h, nrad
 * @param pointsPerAxis M (>= 3)
 * @throws {RangeError} "DC offset T nrad is outside the map (|theta| <= h nrad)"
 * Source: R. G. Keys, "Cubic convolution interpolation for digital image processing",
 * IEEE Trans. Acoust., Speech, Signal Process. 29(6), 1153-1160 (1981), eqs. (15) and (25).
 */
export function axisWeights(thetaNrad: number, halfAngleNrad: number, pointsPerAxis: number): AxisWeights {
  if (!Number.isInteger(pointsPerAxis) || pointsPerAxis < 3) throw new RangeError("pointsPerAxis must be an integer >= 3");
  const h = halfAngleNrad;
  if (!Number.isFinite(thetaNrad) || Math.abs(thetaNrad) > h * (1 + 1e-12)) {
    throw new RangeError(`DC offset ${thetaNrad} nrad is outside the map (|theta| <= ${h} nrad)`);
  }
  const step = (2 * h) / (pointsPerAxis - 1);
  const u = Math.min(pointsPerAxis - 1, Math.max(0, (thetaNrad + h) / step));
  const i = Math.min(pointsPerAxis - 2, Math.floor(u));
  const s = u - i;
  const dense = new Map<number, number>();
  const add = (node: number, w: number) => dense.set(node, (dense.get(node) ?? 0) + w);
  const raw: Array<[number, number]> = [
    [i - 1, keys(1 + s)],
    [i, keys(s)],
    [i + 1, keys(1 - s)],
    [i + 2, keys(2 - s)],
  ];
  const last = pointsPerAxis - 1;
  for (const [node, w] of raw) {
    if (w === 0) continue;
    if (node < 0) {
      add(0, 3 * w);
      add(1, -3 * w);
      add(2, w);
    } else if (node > last) {
      add(last, 3 * w);
      add(last - 1, -3 * w);
      add(last - 2, w);
    } else add(node, w);
  }
  const nodes = Int32Array.from(dense.keys());
  const weights = Float64Array.from(dense.values());
  return { nodes, weights };
}

/**
 * Bicubic (tensor-product Keys) interpolation of a row-major `[iy][ix]` map at `(thetaX, thetaY)`:
 * `sum_iy sum_ix wy[iy] wx[ix] map[iy M + ix]`.
 * @param map M x M values, any unit (result in the same unit)
 * @throws {RangeError} from {@link axisWeights} when the offset is outside the map
 * Source: Keys (1981), section IV (two-dimensional cubic convolution).
 */
export function interpolateMap(
  map: ArrayLike<number>,
  halfAngleNrad: number,
  pointsPerAxis: number,
  thetaXNrad: number,
  thetaYNrad: number,
): number {
  if (map.length !== pointsPerAxis * pointsPerAxis) throw new RangeError("map must have M x M entries");
  const wx = axisWeights(thetaXNrad, halfAngleNrad, pointsPerAxis);
  const wy = axisWeights(thetaYNrad, halfAngleNrad, pointsPerAxis);
  let value = 0;
  for (let a = 0; a < wy.nodes.length; a++) {
    const row = wy.nodes[a] * pointsPerAxis;
    let inner = 0;
    for (let b = 0; b < wx.nodes.length; b++) inner += wx.weights[b] * map[row + wx.nodes[b]];
    value += wy.weights[a] * inner;
  }
  return value;
}
