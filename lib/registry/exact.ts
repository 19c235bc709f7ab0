import { assertCan, type Actor } from "../access/actor.ts";
import { UnprocessableError } from "../errors.ts";
import { thetaGridNrad } from "../optics/setup.ts";
import { toTtlMap } from "../optics/ttlMap.ts";
import { wavefrontToVector } from "../optics/wavefront.ts";
import type { ComputePool } from "../parallel/computePool.ts";
import { checkFinite, evaluateInto } from "../surrogate/evaluate.ts";
import { SURROGATE_NOTICE } from "../surrogate/model.ts";
import { validityWarnings } from "../surrogate/validity.ts";
import type { ExactBody } from "../validation/exact.ts";
import { evaluableTarget, retirementHeaders, surrogateFor } from "./evaluate.ts";

type Grid = (number | null)[][];

/** The exact maps of one wavefront beside the version's surrogate maps and their difference (surrogate - exact). */
export interface ExactComparison {
  model: string;
  version: number;
  state: string;
  coefficientsSha256: string;
  thetaNrad: number[];
  exact: { ttlXPmPerNrad: Grid; ttlYPmPerNrad: Grid; peakAbsTtlPmPerNrad: number };
  surrogate: { ttlXPmPerNrad: number[][]; ttlYPmPerNrad: number[][]; peakAbsTtlPmPerNrad: number };
  /** surrogate - exact per node, pm/nrad; null where the exact TTL is undefined (a far-field null). */
  differencePmPerNrad: { x: Grid; y: Grid };
  maxAbsDifferencePmPerNrad: number;
  maxAbsDifferenceAt: { thetaXNrad: number; thetaYNrad: number; axis: "x" | "y" } | null;
  validity: { inRange: boolean; warnings: string[] };
  notice: string;
  headers: Record<string, string>;
}

/**
 * Exact far-field TTL maps of one wavefront on a version's setup, computed on the server's worker pool, with the
 * version's surrogate maps and the difference (surrogate minus exact) beside them. Who may ask: whoever may evaluate
 * the version (the "evaluate" permission, and the same version states as evaluation).
 * @throws {ForbiddenError} without the permission; {NotFoundError} for an unknown version; {GoneError} after a sunset;
 *   {UnprocessableError} for a term outside the model's Zernike set
 */
export async function exactComparison(
  actor: Actor,
  slug: string,
  version: number,
  body: ExactBody,
  options: { pool: () => ComputePool; now?: Date },
): Promise<ExactComparison> {
  assertCan(actor, "evaluate", slug);
  const target = await evaluableTarget(actor, slug, version, options.now ?? new Date());
  const model = await surrogateFor(target);
  let coefficients: Float64Array;
  try {
    coefficients = wavefrontToVector(body.wavefront, model.nollIndices);
  } catch (error) {
    throw new UnprocessableError("The wavefront cannot be propagated on this version; see issues.", [
      { path: "wavefront.coefficientsNm", message: (error as Error).message },
    ]);
  }
  const M = model.pointsPerAxis;
  const nodes = M * M;
  const theta = thetaGridNrad(model.setup.farField);

  const exact = await options.pool().propagate(model.setup, model.nollIndices, coefficients);
  const surrogate = new Float64Array(2 * nodes);
  evaluateInto(model, coefficients, surrogate);
  checkFinite(surrogate);
  const surrogateX = surrogate.subarray(0, nodes);
  const surrogateY = surrogate.subarray(nodes);

  const undefinedNodes = new Set(Array.from(exact.undefinedNodes));
  const differenceX = new Float64Array(nodes);
  const differenceY = new Float64Array(nodes);
  let worst = -1;
  let worstAt: ExactComparison["maxAbsDifferenceAt"] = null;
  for (let n = 0; n < nodes; n++) {
    if (undefinedNodes.has(n)) continue;
    differenceX[n] = surrogateX[n] - exact.x[n];
    differenceY[n] = surrogateY[n] - exact.y[n];
    for (const [axis, value] of [["x", differenceX[n]], ["y", differenceY[n]]] as const) {
      if (Math.abs(value) > worst) {
        worst = Math.abs(value);
        worstAt = { thetaXNrad: theta[n % M], thetaYNrad: theta[Math.floor(n / M)], axis };
      }
    }
  }
  const exactMap = toTtlMap(theta, exact.x, exact.y, 0, exact.undefinedNodes);
  const surrogateMap = toTtlMap(theta, surrogateX, surrogateY);
  const differenceMap = toTtlMap(theta, differenceX, differenceY, 0, exact.undefinedNodes);
  const peak = (grids: Grid[]) => Math.max(0, ...grids.flat(2).map((v) => (v === null ? 0 : Math.abs(v))));
  const warnings = validityWarnings(model.validity, coefficients);
  return {
    model: slug,
    version: target.version,
    state: target.state,
    coefficientsSha256: target.coefficientsSha256,
    thetaNrad: Array.from(theta),
    exact: { ttlXPmPerNrad: exactMap.ttlXPmPerNrad, ttlYPmPerNrad: exactMap.ttlYPmPerNrad, peakAbsTtlPmPerNrad: peak([exactMap.ttlXPmPerNrad, exactMap.ttlYPmPerNrad]) },
    surrogate: {
      ttlXPmPerNrad: surrogateMap.ttlXPmPerNrad as number[][],
      ttlYPmPerNrad: surrogateMap.ttlYPmPerNrad as number[][],
      peakAbsTtlPmPerNrad: peak([surrogateMap.ttlXPmPerNrad, surrogateMap.ttlYPmPerNrad]),
    },
    differencePmPerNrad: { x: differenceMap.ttlXPmPerNrad, y: differenceMap.ttlYPmPerNrad },
    maxAbsDifferencePmPerNrad: Math.max(0, worst),
    maxAbsDifferenceAt: worstAt,
    validity: { inRange: warnings.length === 0, warnings },
    notice: SURROGATE_NOTICE,
    headers: retirementHeaders(target),
  };
}
