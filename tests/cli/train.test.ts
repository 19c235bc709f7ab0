import { existsSync, readdirSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { beforeAll, describe, expect, it } from "vitest";
import { cliWorkspace, setup, spec } from "./helpers.ts";
import { thetaGridNrad, toTtlMap } from "../../lib/optics/index.ts";
import { propagateMany } from "../../lib/parallel/index.ts";
import { axesAndPairsDesign, decodeModel, SURROGATE_NOTICE } from "../../lib/surrogate/index.ts";

const { dir, stillpoint, write } = cliWorkspace();

let train: ReturnType<typeof stillpoint>;
beforeAll(() => {
  write("spec.json", spec);
  write("setup.json", setup);
  train = stillpoint("train", "--spec", "spec.json", "--out", "model.stpm");
});

describe("stillpoint train", () => {
  it("trains on a non-demo setup and ANSI Zernike set, with progress and a summary on stderr", () => {
    expect(train.code, train.stderr).toBe(0);
    expect(train.stdout).toBe("");
    expect(train.stderr).toMatch(/generating set 80\/80 \(100 %\)/);
    expect(train.stderr).toMatch(/ETA \d+ s|generating set 80\/80/);
    expect(train.stderr).toMatch(/wrote model\.stpm .*\n {2}terms 21, generating samples 80 \(random\)/);
    expect(train.stderr).toContain(SURROGATE_NOTICE);
    const model = decodeModel(readFileSync(join(dir, "model.stpm")));
    expect(model.nollIndices).toEqual([5, 4, 6, 7, 8]); // ANSI 3, 4, 5, 7, 8 (ANSI Z80.28 / Noll 1976 tables)
    expect(model.provenance.seed).toBe(3);
    expect(model.provenance.softwareVersion).toMatch(/^stillpoint \d+\.\d+\.\d+/);
    expect(model.statistics!.overall.samples).toBe(30);
    expect(readdirSync(dir).filter((f) => f.endsWith(".part"))).toEqual([]);
  });

  it("refuses a bad spec with one line and writes nothing", () => {
    write("bad.json", { ...spec, order: 3 });
    const bad = stillpoint("train", "--spec", "bad.json", "--out", "bad.stpm");
    expect(bad.code).toBe(1);
    expect(bad.stderr).toMatch(/^stillpoint train: invalid spec bad\.json: order: .+\n$/);
    write("few.json", { ...spec, generatingSet: { design: "random", size: 10, maxRmsNm: 20, seed: 3 } });
    const few = stillpoint("train", "--spec", "few.json", "--out", "few.stpm");
    expect(few.code).toBe(1);
    expect(few.stderr).toMatch(/stillpoint train: generating set has 10 samples but the model has 21 terms; at least 21 are needed\n$/);
    write("setup-bad.json", { ...spec, setup: { ...setup, pupilSamples: 7 } });
    const badSetup = stillpoint("train", "--spec", "setup-bad.json", "--out", "x.stpm");
    expect(badSetup.stderr).toBe("stillpoint train: invalid spec setup-bad.json: setup.pupilSamples: pupilSamples must be an integer between 32 and 1024\n");
    expect(existsSync(join(dir, "bad.stpm")) || existsSync(join(dir, "few.stpm")) || existsSync(join(dir, "x.stpm"))).toBe(false);
    expect(readdirSync(dir).filter((f) => f.endsWith(".part"))).toEqual([]);
    const missing = stillpoint("train", "--spec", "nowhere.json", "--out", "x.stpm");
    expect(missing.stderr).toBe("stillpoint train: cannot read spec file nowhere.json (ENOENT)\n");
  });

  it("trains from an uploaded generating set and leaves nothing behind when the file cannot be written", async () => {
    // An uploaded set: the axes-and-pairs wavefronts (written in Noll indices, while the model's set is ANSI)
    // with exact maps computed here by the propagator.
    const noll = [5, 4, 6, 7, 8];
    const design = axesAndPairsDesign(5, 8);
    const maps = await propagateMany(setup, noll, design, { threads: 1 });
    const theta = thetaGridNrad(setup.farField);
    const samples = Array.from({ length: 21 }, (_, s) => ({
      wfe: { ordering: "noll", coefficientsNm: Object.fromEntries(noll.map((j, k) => [String(j), design[s * 5 + k]])) },
      map: toTtlMap(theta, maps.x, maps.y, s * 81),
    }));
    write("set.json", { samples });
    write("uploaded.json", { ...spec, generatingSet: { design: "uploaded", file: "set.json" }, validationSet: null });
    const ok = stillpoint("train", "--spec", "uploaded.json", "--out", "uploaded.stpm");
    expect(ok.code, ok.stderr).toBe(0);
    const model = decodeModel(readFileSync(join(dir, "uploaded.stpm")));
    expect(model.provenance.design).toBe("uploaded");
    expect(model.provenance.uploadedSha256).toMatch(/^[0-9a-f]{64}$/);
    expect(model.fit.trainingResidualRmsPmPerNrad).toBe(0); // square design: exactly determined
    expect(ok.stderr).toContain("no validation set: no residual statistics");

    write("short-set.json", { samples: [{ ...samples[0], map: { ...samples[0].map, ttlYPmPerNrad: samples[0].map.ttlYPmPerNrad.slice(1) } }] });
    write("short.json", { ...spec, generatingSet: { design: "uploaded", file: "short-set.json" } });
    expect(stillpoint("train", "--spec", "short.json", "--out", "y.stpm").stderr).toBe(
      "stillpoint train: generating set " + join(dir, "short-set.json") + ", sample 0: map ttlYPmPerNrad must be 9 rows of 9 numbers\n",
    );

    const unwritable = stillpoint("train", "--spec", "uploaded.json", "--out", "no-such-dir/model.stpm");
    expect(unwritable.code).toBe(1);
    expect(unwritable.stderr).toMatch(/stillpoint train: cannot write model file no-such-dir\/model\.stpm \(ENOENT\)\n$/);
    expect(readdirSync(dir).filter((f) => f.endsWith(".part"))).toEqual([]);
  });
});
