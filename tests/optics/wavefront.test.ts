import { describe, expect, it } from "vitest";
import { nollCoefficients, unionNollIndices, wavefrontToVector } from "@/lib/optics/index.ts";

describe("wavefront coefficients", () => {
  it("maps ANSI keys to Noll indices (ANSI 3 = Noll 5, ANSI 12 = Noll 11; ISO 24157 index formula)", () => {
    const map = nollCoefficients({ ordering: "ansi", coefficientsNm: { "3": 2, "12": -1 } });
    expect([...map]).toEqual([[5, 2], [11, -1]]);
  });

  it("places coefficients in the order of a term list, zero where absent", () => {
    expect(Array.from(wavefrontToVector({ ordering: "noll", coefficientsNm: { "6": 3 } }, [4, 5, 6]))).toEqual([0, 0, 3]);
    expect(unionNollIndices([
      { ordering: "noll", coefficientsNm: { "11": 1 } },
      { ordering: "ansi", coefficientsNm: { "4": 1 } },
    ])).toEqual([4, 11]);
  });

  it("rejects bad keys, values and terms outside the set with exact messages", () => {
    expect(() => nollCoefficients({ ordering: "noll", coefficientsNm: { "4": Number.NaN } })).toThrow(
      new RangeError("coefficient of Noll term 4 must be a finite number"),
    );
    expect(() => nollCoefficients({ ordering: "noll", coefficientsNm: { x: 1 } })).toThrow(RangeError);
    expect(() => nollCoefficients({ ordering: "noll", coefficientsNm: { "0": 1 } })).toThrow(
      /Noll index must be an integer from 1 to/,
    );
    expect(() => nollCoefficients({ ordering: "noll", coefficientsNm: [1, 2] as never })).toThrow(TypeError);
    expect(() => wavefrontToVector({ ordering: "noll", coefficientsNm: { "7": 1 } }, [4, 5])).toThrow(
      new RangeError("Noll term 7 is not in this model's Zernike set"),
    );
  });
});
