import { afterAll, describe, expect, it } from "vitest";
import { createComputePool } from "@/lib/parallel/index.ts";
import { evaluateBatch, randomDesign, runAnalysis, secondOrderTerms } from "@/lib/surrogate/index.ts";
import { chosenCoefficients, syntheticModel } from "../surrogate/helpers.ts";

const noll = [4, 5, 6, 11];
const terms = secondOrderTerms(noll);
const model = syntheticModel(terms, noll, chosenCoefficients(terms.length * 50, 0.01), randomDesign(4, { size: 30, maxRmsNm: 20, seed: 1 }));
const pool = createComputePool({ threads: 2 });
afterAll(() => pool.close());

describe("ComputePool analyses and peaks", () => {
  it("runs an analysis on a worker thread with the calling thread's result, bit for bit", async () => {
    // Reference: the same core function on this thread (the worker runs the same code on the shared coefficients).
    const here = runAnalysis(model, { kind: "worst-case", budgetRmsNm: 12 });
    const there = await pool.analyse(model, { kind: "worst-case", budgetRmsNm: 12 });
    expect(Array.from(there.exact)).toEqual(Array.from(here.exact));
    expect(Array.from(there.worstCoefficientsNm)).toEqual(Array.from(here.worstCoefficientsNm));
    await expect(pool.analyse(model, { kind: "worst-case", budgetRmsNm: -1 })).rejects.toThrow("budgetRmsNm must be a finite number > 0");
  });

  it("gives each wavefront's peak |TTL|, the largest |value| of its maps", async () => {
    // Reference: the maps of evaluateBatch, their largest |value| per wavefront taken here.
    const input = randomDesign(4, { size: 37, maxRmsNm: 15, seed: 9 });
    const peaks = await pool.evaluatePeaks(model, input);
    const maps = evaluateBatch(model, input);
    for (let s = 0; s < 37; s++) expect(peaks[s]).toBe(Math.max(...Array.from(maps.subarray(s * 50, (s + 1) * 50), Math.abs)));
  });
});
