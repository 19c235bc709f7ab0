import { readdirSync, readFileSync } from "node:fs";
import { getPriority } from "node:os";
import { afterAll, describe, expect, it } from "vitest";
import { TtlPropagator, type OpticalSetup } from "@/lib/optics/index.ts";
import { createComputePool } from "@/lib/parallel/index.ts";
import { evaluateBatch, MAP_SUMMARY_WIDTH, randomDesign, secondOrderTerms, summariseMapsInto } from "@/lib/surrogate/index.ts";
import { chosenCoefficients, syntheticModel } from "../surrogate/helpers.ts";

const noll = [4, 5, 6, 11];
const terms = secondOrderTerms(noll);
const model = syntheticModel(terms, noll, chosenCoefficients(terms.length * 50, 0.01), randomDesign(4, { size: 30, maxRmsNm: 20, seed: 1 }));
const pool = createComputePool({ threads: 2 });
afterAll(() => pool.close());

describe("ComputePool.evaluateBatch", () => {
  it("gives bit-for-bit the single-thread batch result while sharing rows between threads", async () => {
    // Reference: evaluateBatch on one thread; the workers run the same kernel on disjoint rows.
    for (const size of [1, 2, 7, 101]) {
      const input = randomDesign(4, { size, maxRmsNm: 15, seed: size });
      expect(Array.from(await pool.evaluateBatch(model, input))).toEqual(Array.from(evaluateBatch(model, input)));
    }
  });

  it("keeps several models apart (each shared once, cached by the workers)", async () => {
    const other = syntheticModel(terms, noll, chosenCoefficients(terms.length * 50, -0.02), randomDesign(4, { size: 30, maxRmsNm: 20, seed: 2 }));
    const input = randomDesign(4, { size: 9, maxRmsNm: 15, seed: 4 });
    const [a, b] = await Promise.all([pool.evaluateBatch(model, input), pool.evaluateBatch(other, input)]);
    expect(Array.from(a)).toEqual(Array.from(evaluateBatch(model, input)));
    expect(Array.from(b)).toEqual(Array.from(evaluateBatch(other, input)));
  });

  it("rejects bad input before any thread starts work", async () => {
    await expect(pool.evaluateBatch(model, [1, 2, 3, NaN])).rejects.toThrow(
      new RangeError("coefficient of Noll term 11 must be a finite number (wavefront 0)"),
    );
    expect(() => createComputePool({ threads: 0 })).toThrow(new RangeError("threads must be a positive integer"));
  });
});

describe("summariseMapsInto", () => {
  it("reports the peak, its node and axis and the largest c_x^2 + c_y^2 of hand-made maps", () => {
    // Two wavefronts on a 2 x 2 map (nodes 0..3); the expected values are read off the numbers by hand.
    const maps = new Float64Array([
      0.1, -0.4, 0.2, 0.0, /* c_y */ 0.3, 0.1, -0.4, 0.05,
      1, 2, 3, 4, /* c_y */ -5, 0, 0, 0,
    ]);
    const out = new Float64Array(2 * MAP_SUMMARY_WIDTH);
    summariseMapsInto(maps, 4, 2, out);
    // First: |-0.4| at node 1 on x comes before the tie |-0.4| at node 2 on y; the largest magnitude is node 2's
    // 0.2^2 + 0.4^2 = 0.2 (node 1: 0.16 + 0.01).
    expect(Array.from(out.subarray(0, 4))).toEqual([0.4, 1, 0, 0.2 ** 2 + 0.4 ** 2]);
    // Second: |-5| on y at node 0; the largest magnitude 1 + 25 = 26 at node 0.
    expect(Array.from(out.subarray(4, 8))).toEqual([5, 0, 1, 26]);
    summariseMapsInto(new Float64Array([1, Number.POSITIVE_INFINITY, 0, 0]), 2, 1, out);
    expect(out[0]).toBeNaN();
  });
});

describe("ComputePool.summariseBatch", () => {
  it("gives the summaries of the single-thread maps while the maps stay in the workers", async () => {
    for (const size of [1, 63, 64, 65, 301]) {
      const input = randomDesign(4, { size, maxRmsNm: 15, seed: 40 + size });
      const nodes = model.pointsPerAxis ** 2;
      const expected = new Float64Array(size * MAP_SUMMARY_WIDTH);
      summariseMapsInto(evaluateBatch(model, input), nodes, size, expected);
      expect(Array.from(await pool.summariseBatch(model, input))).toEqual(Array.from(expected));
    }
  });

  it("refuses a batch whose maps overflow", async () => {
    await expect(pool.summariseBatch(model, [1e200, 1e200, 1e200, 1e200])).rejects.toThrow(/not finite/);
  });
});

describe("ComputePool.propagate", () => {
  const setup: OpticalSetup = {
    wavelengthNm: 1550, apertureDiameterM: 0.2, beamRadiusM: 0.08, distanceM: 1e9,
    farField: { halfAngleNrad: 80, pointsPerAxis: 7 }, pupilSamples: 48,
  };
  const indices = [4, 6, 11];

  it("gives bit-for-bit the single-thread maps, with progress, and stays usable for the next call", async () => {
    const propagator = new TtlPropagator(setup, indices);
    for (const seed of [1, 2]) {
      const coefficients = randomDesign(3, { size: 10, maxRmsNm: 20, seed });
      const progress: number[] = [];
      const maps = await pool.propagate(setup, indices, coefficients, { chunkSize: 3, onProgress: (done) => progress.push(done) });
      // Four chunks of 3, 3, 3 and 1 wavefronts: four reports, increasing, ending at 10.
      expect(progress).toHaveLength(4);
      expect([...progress].sort((a, b) => a - b)).toEqual(progress);
      expect(progress.at(-1)).toBe(10);
      expect(maps.undefinedNodes).toEqual(new Int32Array(0));
      for (let s = 0; s < 10; s++) {
        const { x } = propagator.ttl(coefficients.subarray(3 * s, 3 * s + 3));
        expect(Array.from(maps.x.subarray(49 * s, 49 * (s + 1)))).toEqual(Array.from(x));
      }
    }
  });

  it("stops when cancelled", async () => {
    const controller = new AbortController();
    const coefficients = randomDesign(3, { size: 40, maxRmsNm: 20, seed: 3 });
    let reports = 0;
    const run = pool.propagate(setup, indices, coefficients, {
      chunkSize: 1, signal: controller.signal, onProgress: (done) => { reports++; if (done === 3) controller.abort(); },
    });
    await expect(run).rejects.toThrow(/abort/i);
    // No chunk reports after the abort (those in flight finish on their worker and are dropped).
    expect(reports).toBe(3);
    // The pool still works afterwards.
    const after = await pool.propagate(setup, indices, coefficients.subarray(0, 6));
    expect(after.count).toBe(2);
  });
});

describe("createComputePool niceIncrement", () => {
  /** Nice values of this process's threads (Linux: /proc/self/task/<tid>/stat, field 19 of proc(5)). */
  const threadNiceValues = () =>
    readdirSync("/proc/self/task").map((tid) => Number(readFileSync(`/proc/self/task/${tid}/stat`, "utf8").split(") ")[1].split(" ")[16]));

  it.runIf(process.platform === "linux")("runs the pool's threads at the lower priority and leaves the calling thread alone", async () => {
    // Relative to this process's own priority (the suite may itself run under nice); nice stops at 19.
    const base = getPriority();
    const lowered = Math.min(19, base + 7);
    const before = threadNiceValues().filter((nice) => nice === lowered).length;
    const niced = createComputePool({ threads: 2, niceIncrement: 7 });
    try {
      // The threads start with the first task; two tasks at once occupy both.
      const input = randomDesign(4, { size: 64, maxRmsNm: 15, seed: 9 });
      await Promise.all([niced.evaluateBatch(model, input), niced.evaluateBatch(model, input)]);
      // The two pool threads, and any thread they start (which inherits their priority).
      expect(threadNiceValues().filter((nice) => nice === lowered).length - before).toBeGreaterThanOrEqual(2);
      expect(Number(readFileSync("/proc/thread-self/stat", "utf8").split(") ")[1].split(" ")[16])).toBe(base);
    } finally {
      await niced.close();
    }
  });
});
