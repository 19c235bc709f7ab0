import { describe, expect, it } from "vitest";
import {
  axesAndPairsDesign, axesAndPairsSize, compileTerms, featuresInto, firstOrderTerms, fullTermCount, secondOrderTerms,
} from "../../lib/surrogate/index.ts";

const noll4to36 = Array.from({ length: 33 }, (_, i) => i + 4);

describe("term lists", () => {
  it("has 1 + J first-order and 1 + J + J(J+1)/2 second-order terms (34 and 595 for Noll 4-36)", () => {
    // Source: PHYSICS.md section 5 (counts), J = 33: 1 + 33 = 34, 1 + 33 + 33*34/2 = 595.
    expect(firstOrderTerms(noll4to36)).toHaveLength(34);
    expect(secondOrderTerms(noll4to36)).toHaveLength(595);
    expect(fullTermCount(33, 2)).toBe(595);
    expect(secondOrderTerms([4, 7])).toEqual([[], [4], [7], [4, 4], [4, 7], [7, 7]]);
  });

  it("axes-and-pairs has 1 + 2J + J(J-1)/2 samples, equal to the second-order term count for every J", () => {
    // Closed form: 1 + 2J + J(J-1)/2 = 1 + J + (J^2 + J)/2 = 1 + J + J(J+1)/2.
    for (let J = 1; J <= 40; J++) expect(axesAndPairsSize(J)).toBe(fullTermCount(J, 2));
    expect(axesAndPairsSize(33)).toBe(595);
    const design = axesAndPairsDesign(3, 2);
    expect(Array.from(design)).toEqual([0, 0, 0, 2, 0, 0, -2, 0, 0, 0, 2, 0, 0, -2, 0, 0, 0, 2, 0, 0, -2, 2, 2, 0, 2, 0, 2, 0, 2, 2]);
  });

  it("computes features as products of the named coefficients", () => {
    const terms = compileTerms([[], [7], [4, 7], [7, 7]], [4, 7]);
    const out = new Float64Array(4);
    featuresInto(terms, [2, 3], out);
    expect(Array.from(out)).toEqual([1, 3, 6, 9]);
  });

  it("accepts any subset of the second-order list as a pruned model", () => {
    expect(compileTerms([[4, 7]], [4, 7]).count).toBe(1);
  });

  it("rejects malformed term lists with exact messages", () => {
    expect(() => compileTerms([], [4])).toThrow(new RangeError("term list must not be empty"));
    expect(() => compileTerms([[4, 4, 4]], [4])).toThrow(new RangeError("term [4, 4, 4] has more than two factors"));
    expect(() => compileTerms([[5]], [4])).toThrow(new RangeError("term [5] uses Noll index 5, which is not in the model"));
    expect(() => compileTerms([[7, 4]], [4, 7])).toThrow(new RangeError("term [7, 4] must list its indices in model order"));
    expect(() => compileTerms([[4], [4]], [4])).toThrow(new RangeError("term [4] appears twice"));
    expect(() => firstOrderTerms([])).toThrow(new RangeError("nollIndices must list at least one term"));
    expect(() => firstOrderTerms([4, 4])).toThrow(new RangeError("nollIndices lists Noll term 4 more than once"));
    expect(() => firstOrderTerms([0])).toThrow(/^Noll index must be an integer from 1 to \d+, got 0$/);
    expect(() => firstOrderTerms([NaN])).toThrow(/^Noll index must be an integer from 1 to \d+, got NaN$/);
  });
});
