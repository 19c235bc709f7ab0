import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { SplitMix64, randomAmplitudeDesign, randomDesign, sampleRmsNm } from "../../lib/surrogate/index.ts";

const reference = JSON.parse(readFileSync(new URL("../fixtures/surrogate/reference.json", import.meta.url), "utf8"));

describe("SplitMix64", () => {
  it("produces the published sequence for seeds 0, 7 and 1234567", () => {
    // Source: Python-integer implementation in make_reference.py; seed 0 starts 0xe220a8397b1dcdaf and seed
    // 1234567 starts 6457827717110365317, the values quoted with Vigna's splitmix64.c (from memory).
    for (const [seed, values] of Object.entries(reference.splitmix64 as Record<string, string[]>)) {
      const random = new SplitMix64(Number(seed));
      expect(values.map(() => random.nextUint64().toString())).toEqual(values);
    }
    expect(new SplitMix64(0).nextUint64()).toBe(0xe220a8397b1dcdafn);
  });

  it("rejects a seed that is not a safe integer", () => {
    expect(() => new SplitMix64(1.5)).toThrow(new RangeError("seed must be a safe integer"));
    expect(() => new SplitMix64(NaN)).toThrow(new RangeError("seed must be a safe integer"));
  });
});
