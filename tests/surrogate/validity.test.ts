import { describe, expect, it } from "vitest";
import { validityFromSamples, validityWarnings } from "../../lib/surrogate/index.ts";

describe("validity range", () => {
  it("records the largest total RMS and per-term bounds of the generating set", () => {
    const v = validityFromSamples([4, 5], [3, 4, -1, 0, 0, 2]);
    expect(v.maxTotalRmsNm).toBe(5); // sqrt(3^2 + 4^2), hand computed
    expect(v.termBoundsNm).toEqual([{ noll: 4, minNm: -1, maxNm: 3 }, { noll: 5, minNm: 0, maxNm: 4 }]);
    expect(validityWarnings(v, [3, 4])).toEqual([]);
    expect(validityWarnings(v, [-2, 1])).toEqual(["Z4 = -2 nm is outside the fitted range [-1 nm, 3 nm]"]);
    expect(() => validityFromSamples([4], [])).toThrow(new RangeError("sample set must not be empty"));
  });
});
