import { afterAll, describe, expect, it } from "vitest";
import { BatchEvaluator } from "../../lib/surrogate/batchThreads.ts";
import { evaluateBatch, randomDesign, secondOrderTerms } from "../../lib/surrogate/index.ts";
import { chosenCoefficients, syntheticModel } from "./helpers.ts";

const noll = [4, 5, 6, 11];
const terms = secondOrderTerms(noll);
const model = syntheticModel(terms, noll, chosenCoefficients(terms.length * 50, 0.01), randomDesign(4, { size: 30, maxRmsNm: 20, seed: 1 }));
const evaluator = new BatchEvaluator(model, 2);
afterAll(() => evaluator.close());

describe("BatchEvaluator", () => {
  it("gives bit-for-bit the single-thread batch result while sharing rows between threads", async () => {
    // Reference: evaluateBatch on one thread; both threads run the same kernel on disjoint rows.
    for (const size of [1, 2, 7, 101]) {
      const input = randomDesign(4, { size, maxRmsNm: 15, seed: size });
      expect(Array.from(await evaluator.evaluate(input))).toEqual(Array.from(evaluateBatch(model, input)));
    }
  });

  it("rejects bad input before any thread starts work", async () => {
    await expect(evaluator.evaluate([1, 2, 3, NaN])).rejects.toThrow(new RangeError("coefficient of Noll term 11 must be a finite number (wavefront 0)"));
    expect(() => new BatchEvaluator(model, 0)).toThrow(new RangeError("threads must be a positive integer"));
  });
});
