import { describe, expect, it } from "vitest";
import { requireDefinedTtl, toTtlMap, undefinedNodesWarning } from "@/lib/optics/index.ts";

describe("undefined nodes in written maps (PHYSICS.md section 2: an exact null is undefined, null in JSON)", () => {
  it("the JSON map writer emits null at the node, and the warning names it", () => {
    // Two 3 x 3 maps; node (ix 2, iy 1) of map 1 is undefined: flat index 9 + 1 * 3 + 2 = 14.
    const x = Float64Array.from({ length: 18 }, (_, i) => i / 10), y = x.map((v) => -v);
    const maps = { pointsPerAxis: 3, count: 2, x, y, undefinedNodes: Int32Array.of(14) };
    const second = toTtlMap([-1, 0, 1], x, y, 9, maps.undefinedNodes);
    expect(second.ttlXPmPerNrad[1]).toEqual([1.2, 1.3, null]);
    expect(second.ttlYPmPerNrad[1][2]).toBeNull();
    expect(JSON.stringify(second.ttlXPmPerNrad[1])).toBe("[1.2,1.3,null]");
    expect(toTtlMap([-1, 0, 1], x, y, 0, maps.undefinedNodes).ttlXPmPerNrad.flat()).not.toContain(null);
    expect(undefinedNodesWarning(maps)).toBe(
      "TTL undefined at 1 far-field node (exact nulls of the far field, reported as null); first: map 1, ix 2, iy 1",
    );
    expect(undefinedNodesWarning({ ...maps, undefinedNodes: new Int32Array(0) })).toBeNull();
  });

  it("requireDefinedTtl refuses such maps for training with a clear message", () => {
    const maps = { pointsPerAxis: 3, undefinedNodes: Int32Array.of(4, 5) };
    expect(() => requireDefinedTtl(maps, "generating set")).toThrow(
      new RangeError(
        "generating set: TTL undefined at 2 far-field nodes (exact nulls of the far field, reported as null); " +
          "first: map 0, ix 1, iy 1; a surrogate cannot be trained on them (choose other wavefronts or far-field nodes)",
      ),
    );
    const fine = { pointsPerAxis: 3, undefinedNodes: [] };
    expect(requireDefinedTtl(fine, "generating set")).toBe(fine);
  });
});
