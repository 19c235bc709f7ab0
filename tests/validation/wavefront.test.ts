import { describe, expect, it } from "vitest";
import { z } from "zod";
import { nollCoefficients } from "@/lib/optics/wavefront.ts";
import type { Wavefront } from "@/lib/optics/types.ts";
import { wavefrontInputSchema, wavefrontSchema } from "@/lib/validation/wavefront.ts";

function coreVerdict(value: unknown): string {
  try {
    nollCoefficients(value as Wavefront);
    return "ok";
  } catch (error) {
    return (error as Error).message;
  }
}

describe("wavefrontSchema agrees with the core's nollCoefficients", () => {
  const cases: [string, unknown][] = [
    ["a Noll wavefront", { ordering: "noll", coefficientsNm: { "4": 3.2, "11": -1.5 } }],
    ["an ANSI wavefront", { ordering: "ansi", coefficientsNm: { "3": 12, "12": -4 } }],
    ["a string coefficient", { ordering: "ansi", coefficientsNm: { "4": "x" } }],
    ["a null coefficient", { ordering: "noll", coefficientsNm: { "4": null } }],
    ["an index out of range", { ordering: "noll", coefficientsNm: { "0": 1 } }],
    ["a key that is not an index", { ordering: "noll", coefficientsNm: { "four": 1 } }],
    ["an unknown ordering", { ordering: "fringe", coefficientsNm: { "4": 1 } }],
    ["the same term in two spellings", { ordering: "noll", coefficientsNm: { "4": 1, "04": 2 } }],
  ];
  it.each(cases)("gives the same verdict and message for %s", (_name, value) => {
    const parsed = wavefrontSchema.safeParse(value);
    expect(parsed.success ? "ok" : parsed.error.issues[0].message).toBe(coreVerdict(value));
  });
});

describe("wavefrontInputSchema: one wavefront or a non-empty array", () => {
  const one = { ordering: "noll", coefficientsNm: { "4": 1 } };
  it("reads one object as a single item and an array in order", () => {
    expect(wavefrontInputSchema.parse(one)).toEqual({ single: true, items: [one] });
    const two = [one, { ordering: "ansi", coefficientsNm: { "3": 2 } }];
    expect(wavefrontInputSchema.parse(two)).toEqual({ single: false, items: two });
  });

  it("refuses an empty array and names the element that fails", () => {
    const empty = wavefrontInputSchema.safeParse([]);
    expect(empty.success ? null : empty.error.issues[0].message).toBe("wavefront list must not be empty");
    const bad = wavefrontInputSchema.safeParse([one, { ordering: "noll", coefficientsNm: { "5": Number.NaN } }]);
    expect(bad.success ? null : bad.error.issues[0]).toMatchObject({
      path: [1], message: "coefficient of Noll term 5 must be a finite number",
    });
  });
});

describe("issue paths", () => {
  it("name the same place however often a bad wavefront is checked inside a list", () => {
    const bad = [{ ordering: "noll", coefficientsNm: { "4": 1 } }, { ordering: "noll", coefficientsNm: { "0": 1 } }];
    const list = z.array(wavefrontSchema);
    const paths = Array.from({ length: 3 }, () => list.safeParse(bad).error!.issues.map((issue) => issue.path));
    expect(paths).toEqual([[[1]], [[1]], [[1]]]);
  });
});
