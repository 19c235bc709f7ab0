import { thetaGridNrad } from "../optics/setup.ts";
import type { SurrogateModel } from "../surrogate/model.ts";
import { writeNpy } from "./npy.ts";
import { writeNpz } from "./npz.ts";

/**
 * A model's coefficients as the `.npz` of API.md ("The .npz coefficient export"): `theta_nrad` float64 (M,),
 * `noll_indices` int32 (J,), `terms` int32 (T, 2) with 0 for an absent factor, `coefficients_x` and
 * `coefficients_y` float32 (T, M, M) as `[t][iy][ix]`, and `metadata.json`. The float32 values are the stored ones
 * (the `.stpm` grids), so NumPy gets exactly the registry's numbers.
 */
export function coefficientsNpz(model: SurrogateModel, metadata: Record<string, unknown>): Uint8Array {
  const M = model.pointsPerAxis;
  const nodes = M * M;
  const T = model.terms.length;
  const terms = new Int32Array(T * 2);
  model.terms.forEach((term, t) => {
    terms[2 * t] = term[0] ?? 0;
    terms[2 * t + 1] = term[1] ?? 0;
  });
  const x = new Float32Array(T * nodes);
  const y = new Float32Array(T * nodes);
  for (let t = 0; t < T; t++) {
    const row = t * 2 * nodes;
    x.set(model.coefficients.subarray(row, row + nodes), t * nodes);
    y.set(model.coefficients.subarray(row + nodes, row + 2 * nodes), t * nodes);
  }
  return writeNpz(
    {
      theta_nrad: writeNpy("<f8", [M], thetaGridNrad(model.setup.farField)),
      noll_indices: writeNpy("<i4", [model.nollIndices.length], model.nollIndices),
      terms: writeNpy("<i4", [T, 2], terms),
      coefficients_x: writeNpy("<f4", [T, M, M], x),
      coefficients_y: writeNpy("<f4", [T, M, M], y),
    },
    { "metadata.json": JSON.stringify(metadata, null, 2) },
  );
}
