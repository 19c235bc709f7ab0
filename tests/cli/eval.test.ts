import { readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { beforeAll, describe, expect, it } from "vitest";
import { cliWorkspace, setup, spec } from "./helpers.ts";
import { encodeModel, firstOrderTerms, randomDesign, SURROGATE_NOTICE } from "../../lib/surrogate/index.ts";
import { syntheticModel } from "../surrogate/helpers.ts";

const { dir, stillpoint, write } = cliWorkspace();
const inside = { ordering: "ansi", coefficientsNm: { "4": 6, "3": -4, "8": 3 } };
const outside = { ordering: "ansi", coefficientsNm: { "4": 30 } };

/**
 * A first-order model with chosen coefficients on Noll 4 and 5 over 5 x 5 nodes: C_t(p) = (t + 1)(p - 12) / 64,
 * t = 0 (c0), 1 (A_4), 2 (A_5), p = 0 .. 49 the output ([c_x map, c_y map]). Multiples of 1/64 are exact in
 * Float32, so the stored model is exactly this polynomial.
 */
const knownNoll = [4, 5];
const knownCoefficients = Float64Array.from({ length: 3 * 50 }, (_, i) => ((Math.floor(i / 50) + 1) * ((i % 50) - 12)) / 64);
const knownModel = syntheticModel(firstOrderTerms(knownNoll), knownNoll, knownCoefficients, randomDesign(2, { size: 20, maxRmsNm: 20, seed: 1 }), 1);

let train: ReturnType<typeof stillpoint>;
beforeAll(() => {
  write("spec.json", spec);
  write("setup.json", setup);
  write("inside.json", inside);
  write("both.json", [inside, outside]);
  train = stillpoint("train", "--spec", "spec.json", "--out", "model.stpm");
  writeFileSync(join(dir, "known.stpm"), encodeModel(knownModel));
});

describe("stillpoint eval", () => {
  it("prints the known polynomial's value at every node for a model file holding it", () => {
    // Closed form: c(p) = C_0(p) + a_4 C_1(p) + a_5 C_2(p) = (p - 12)/64 (1 + 2 a_4 + 3 a_5), with a_4 = 2, a_5 = -1.5
    // (PHYSICS.md section 5, first order); exact in double arithmetic, so compared to 1e-12.
    write("known-wfe.json", { ordering: "noll", coefficientsNm: { "4": 2, "5": -1.5 } });
    const result = stillpoint("eval", "--model", "known.stpm", "--wfe", "known-wfe.json");
    expect(result.code, result.stderr).toBe(0);
    const map = JSON.parse(result.stdout);
    expect(map.thetaNrad).toEqual([-50, -25, 0, 25, 50]);
    for (let iy = 0; iy < 5; iy++) {
      for (let ix = 0; ix < 5; ix++) {
        const p = iy * 5 + ix;
        expect(map.ttlXPmPerNrad[iy][ix]).toBeCloseTo(((p - 12) / 64) * (1 + 2 * 2 + 3 * -1.5), 12);
        expect(map.ttlYPmPerNrad[iy][ix]).toBeCloseTo(((p + 25 - 12) / 64) * (1 + 2 * 2 + 3 * -1.5), 12);
      }
    }
    expect(map.notice).toBe(SURROGATE_NOTICE);
  });

  it("prints one map for one wavefront of a trained model, close to the exact map", () => {
    expect(train.code, train.stderr).toBe(0);
    const result = stillpoint("eval", "--model", "model.stpm", "--wfe", "inside.json");
    expect(result.code, result.stderr).toBe(0);
    const map = JSON.parse(result.stdout);
    expect(map.thetaNrad).toEqual([-40, -30, -20, -10, 0, 10, 20, 30, 40]);
    expect(map.warnings).toEqual([]);
    expect(map.notice).toBe(SURROGATE_NOTICE);
    // Truth: the exact map through `stillpoint ttl` (itself checked against the independent NumPy reference in
    // tests/cli/ttl.test.ts). Within 5 % of the exact peak: PHYSICS.md section 5 reports about 3 % for
    // second-order models inside their validity range.
    const exact = JSON.parse(stillpoint("ttl", "--setup", "setup.json", "--wfe", "inside.json").stdout);
    const peak = Math.max(...exact.ttlXPmPerNrad.flat().map(Math.abs), ...exact.ttlYPmPerNrad.flat().map(Math.abs));
    let worst = 0;
    for (const axis of ["ttlXPmPerNrad", "ttlYPmPerNrad"]) {
      exact[axis].forEach((row: number[], iy: number) => row.forEach((v, ix) => (worst = Math.max(worst, Math.abs(v - map[axis][iy][ix])))));
    }
    expect(worst / peak).toBeLessThan(0.05);
  });

  it("prints an array for an array and flags wavefronts outside the validity range", () => {
    const result = stillpoint("eval", "--model", "model.stpm", "--wfe", "both.json");
    expect(result.code, result.stderr).toBe(0);
    const maps = JSON.parse(result.stdout);
    expect(maps).toHaveLength(2);
    expect(maps[0].warnings).toEqual([]);
    expect(maps[1].warnings[0]).toMatch(/^total RMS 30 nm is above the model's validity limit of [\d.]+ nm$/);
    expect(maps[1].warnings[1]).toMatch(/^Z4 = 30 nm is outside the fitted range/);
    expect(result.stderr).toMatch(/warning: wavefront 1: total RMS 30 nm is above/);
    expect(Number.isFinite(maps[1].ttlXPmPerNrad[0][0])).toBe(true);
  });

  it("refuses corrupt, truncated and foreign model files and unknown terms with one line", () => {
    const bytes = readFileSync(join(dir, "model.stpm"));
    const corrupt = Uint8Array.from(bytes);
    corrupt[corrupt.length - 50] ^= 0xff;
    writeFileSync(join(dir, "corrupt.stpm"), corrupt);
    writeFileSync(join(dir, "short.stpm"), bytes.subarray(0, bytes.length - 10));
    const c = stillpoint("eval", "--model", "corrupt.stpm", "--wfe", "inside.json");
    expect(c.code).toBe(1);
    expect(c.stderr).toMatch(/^stillpoint eval: corrupt\.stpm: model file coefficients are corrupt \(.+\)\n$/);
    expect(c.stdout).toBe("");
    expect(stillpoint("eval", "--model", "short.stpm", "--wfe", "inside.json").stderr).toBe(
      "stillpoint eval: short.stpm: model file is truncated (coefficients)\n",
    );
    expect(stillpoint("eval", "--model", "spec.json", "--wfe", "inside.json").stderr).toBe(
      "stillpoint eval: spec.json: not a Stillpoint model file (no STPM signature)\n",
    );
    write("foreign-term.json", { ordering: "noll", coefficientsNm: { "11": 1 } });
    expect(stillpoint("eval", "--model", "model.stpm", "--wfe", "foreign-term.json").stderr).toBe(
      "stillpoint eval: wavefront: Noll term 11 is not in this model's Zernike set\n",
    );
    write("nan.json", '{"ordering":"ansi","coefficientsNm":{"4":"x"}}');
    expect(stillpoint("eval", "--model", "model.stpm", "--wfe", "nan.json").stderr).toBe(
      "stillpoint eval: wavefront: coefficient of ANSI term 4 must be a finite number\n",
    );
  });
});
