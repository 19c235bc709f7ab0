import { describe, expect, it } from "vitest";
import { trainSurrogate, type ExactPropagator } from "@/lib/surrogate/index.ts";
import { smallSetup } from "./helpers.ts";

describe("trainSurrogate and undefined TTL nodes (PHYSICS.md section 2)", () => {
  it("refuses a generating set whose exact maps hold an exact far-field null, before fitting", async () => {
    // A propagator that reports node (ix 3, iy 0) of sample 2 as undefined (|E| = 0): the maps hold 0 there,
    // which a fit would take as a measured value. PHYSICS.md: report such a node as undefined, never a number.
    const nodes = 25;
    const withNull: ExactPropagator = async (_noll, coefficientsNm) => {
      const count = coefficientsNm.length / 2;
      return { x: new Float64Array(count * nodes), y: new Float64Array(count * nodes), undefinedNodes: [2 * nodes + 3] };
    };
    const request = {
      setup: smallSetup, zernike: { ordering: "noll" as const, indices: [4, 5] }, order: 1 as const,
      generatingSet: { design: "random" as const, size: 10, maxRmsNm: 10, seed: 1 },
      validationSet: null, softwareVersion: "test", createdAt: "2026-12-01T00:00:00.000Z",
    };
    await expect(trainSurrogate(request, withNull, () => {})).rejects.toThrow(
      "generating set: TTL undefined at 1 far-field node (exact nulls of the far field, reported as null); " +
        "first: map 2, ix 3, iy 0; a surrogate cannot be trained on them",
    );
  });
});
