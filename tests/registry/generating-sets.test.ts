import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { zipSync } from "fflate";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Actor } from "@/lib/access/actor";
import { createGeneratingSet, listGeneratingSets } from "@/lib/db/generatingSets";
import { closeDb, db } from "@/lib/db/knex";
import { loadSurrogate } from "@/lib/db/versions";
import { writeNpy } from "@/lib/formats/npy";
import { writeNpz } from "@/lib/formats/npz";
import { thetaGridNrad } from "@/lib/optics/setup";
import { runTtlTask } from "@/lib/parallel/ttlTask";
import { closeQueueClients } from "@/lib/queue/enqueue";
import type { WorkerHandle } from "@/lib/queue/worker";
import { createPruningRun } from "@/lib/registry/pruning";
import { createTrainingRun } from "@/lib/registry/training";
import { randomDesign, type SampleSet } from "@/lib/surrogate/designs";
import { evaluateBatch } from "@/lib/surrogate/evaluate";
import { trainSurrogate } from "@/lib/surrogate/train";
import { SOFTWARE_VERSION } from "@/lib/version";
import { actorFor, createTestModel, inProcessWorker, SMALL_SETUP, SMALL_ZERNIKE, waitForRun } from "../helpers/registry";
import { testDatabaseName } from "../helpers/test-database";

testDatabaseName();

const hasNumpy = spawnSync("python3", ["-c", "import numpy"], { encoding: "utf8" }).status === 0;
const M = SMALL_SETUP.farField.pointsPerAxis;
const J = SMALL_ZERNIKE.indices.length;
const theta = thetaGridNrad(SMALL_SETUP.farField);

let modeller: Actor;
let worker: WorkerHandle;
beforeAll(async () => {
  modeller = await actorFor("modeller@velora.test");
  worker = inProcessWorker();
});
afterAll(async () => {
  await worker?.close(true);
  await closeQueueClients();
  await closeDb();
});

/** Exactly propagated samples in the model's Noll order (4, 5, 6, 7, 8). */
function exactSet(count: number, seed: number): SampleSet {
  const coefficientsNm = randomDesign(J, { size: count, maxRmsNm: 25, seed });
  const maps = runTtlTask({ setup: SMALL_SETUP, nollIndices: SMALL_ZERNIKE.indices, coefficientsNm, count });
  return { coefficientsNm, x: maps.x, y: maps.y, count, pointsPerAxis: M };
}

/** The members of API.md's generating set, columns in the order given (a permutation of the model's Noll order). */
function members(set: SampleSet, columns = [0, 1, 2, 3, 4]) {
  const noll = columns.map((c) => SMALL_ZERNIKE.indices[c]);
  const coefficients = new Float64Array(set.count * J);
  for (let s = 0; s < set.count; s++) columns.forEach((c, k) => (coefficients[s * J + k] = set.coefficientsNm[s * J + c]));
  return {
    noll_indices: writeNpy("<i4", [J], noll),
    theta_nrad: writeNpy("<f8", [M], theta),
    coefficients_nm: writeNpy("<f8", [set.count, J], coefficients),
    ttl_x_pm_per_nrad: writeNpy("<f8", [set.count, M, M], set.x),
    ttl_y_pm_per_nrad: writeNpy("<f8", [set.count, M, M], set.y),
  };
}

/** Re-save the members with NumPy's own savez or savez_compressed, so that the archive is NumPy's, not ours. */
function numpyArchive(arrays: Record<string, Uint8Array>, compressed: boolean): Uint8Array {
  const dir = mkdtempSync(join(tmpdir(), "stillpoint-gs-"));
  for (const [name, bytes] of Object.entries(arrays)) writeFileSync(join(dir, `${name}.npy`), bytes);
  const script = `
import sys, numpy as np
d = sys.argv[1]
names = ["noll_indices", "theta_nrad", "coefficients_nm", "ttl_x_pm_per_nrad", "ttl_y_pm_per_nrad"]
arrays = {n: np.load(f"{d}/{n}.npy") for n in names}
(np.savez_compressed if sys.argv[2] == "1" else np.savez)(f"{d}/set.npz", **arrays)
`;
  const out = spawnSync("python3", ["-c", script, dir, compressed ? "1" : "0"], { encoding: "utf8" });
  if (out.status !== 0) throw new Error(out.stderr);
  return new Uint8Array(readFileSync(join(dir, "set.npz")));
}

async function countSets(): Promise<number> {
  const [row] = await db()("generating_sets").count({ n: "*" });
  return Number(row.n);
}

describe("uploaded generating sets", () => {
  it.skipIf(!hasNumpy)("are read from numpy.savez and numpy.savez_compressed, columns in any order, and train a model", async () => {
    const slug = await createTestModel(modeller);
    const training = exactSet(60, 31);
    const validation = exactSet(20, 32);
    const plain = await createGeneratingSet(modeller, slug, { fileName: "train.npz", bytes: numpyArchive(members(training, [2, 0, 4, 1, 3]), false) });
    const packed = await createGeneratingSet(modeller, slug, { fileName: "check.npz", bytes: numpyArchive(members(validation), true) });
    expect(plain).toMatchObject({ samples: 60, fileName: "train.npz" });
    expect(packed.samples).toBe(20);
    expect(plain.sha256).toMatch(/^[0-9a-f]{64}$/);
    expect((await listGeneratingSets(modeller, slug)).map((s) => s.id)).toEqual([plain.id, packed.id]);

    const queued = await createTrainingRun(modeller, slug, {
      order: 2,
      generatingSet: { design: "uploaded", generatingSetId: plain.id },
      validationSet: { design: "uploaded", generatingSetId: packed.id },
    });
    const { run } = await waitForRun(modeller, queued.id);
    expect(run.state).toBe("succeeded");
    const { surrogate } = await loadSurrogate(modeller, slug, run.version!);
    expect(surrogate.provenance.design).toBe("uploaded");
    const direct = await trainSurrogate(
      {
        setup: SMALL_SETUP, zernike: SMALL_ZERNIKE, order: 2, generatingSet: { design: "uploaded", set: training },
        validationSet: { design: "uploaded", set: validation }, softwareVersion: SOFTWARE_VERSION, createdAt: surrogate.provenance.createdAt,
      },
      async () => {
        throw new Error("nothing to propagate");
      },
    );
    expect(Array.from(surrogate.coefficients)).toEqual(Array.from(direct.model.coefficients));
    expect(surrogate.statistics).toEqual(direct.model.statistics);
  });

  it("prune a version validated on an uploaded set into a draft with statistics from that set", async () => {
    const slug = await createTestModel(modeller);
    const validation = exactSet(40, 35);
    const uploaded = await createGeneratingSet(modeller, slug, { fileName: "check.npz", bytes: writeNpz(members(validation)) });
    const training = await createTrainingRun(modeller, slug, {
      order: 2,
      generatingSet: { design: "random", size: 60, maxRmsNm: 20, seed: 3 },
      validationSet: { design: "uploaded", generatingSetId: uploaded.id },
    });
    expect((await waitForRun(modeller, training.id)).run.state).toBe("succeeded");
    const queued = await createPruningRun(modeller, slug, 1, { budgetRmsNm: 20, jitterNrad: 8, thresholdPm: 0.05 });
    // Nothing to propagate: the uploaded set holds its exact maps.
    expect(queued.progress.total).toBe(0);
    const { run } = await waitForRun(modeller, queued.id);
    expect(run.state).toBe("succeeded");
    const { surrogate: parent } = await loadSurrogate(modeller, slug, 1);
    const { surrogate: pruned } = await loadSurrogate(modeller, slug, run.version!);
    expect(pruned.terms.length).toBeLessThan(parent.terms.length);
    expect(pruned.statistics).not.toBeNull();
    // The draft's largest error, checked against the exact maps propagated here (runTtlTask, PHYSICS.md sections 2-3)
    // for the uploaded wavefronts: max over samples, nodes and axes of |pruned model - exact|.
    const modelMaps = evaluateBatch(pruned, validation.coefficientsNm);
    const nodes = M * M;
    let largest = 0;
    for (let s = 0; s < validation.count; s++) {
      for (let n = 0; n < nodes; n++) {
        largest = Math.max(largest, Math.abs(modelMaps[s * 2 * nodes + n] - validation.x[s * nodes + n]), Math.abs(modelMaps[s * 2 * nodes + nodes + n] - validation.y[s * nodes + n]));
      }
    }
    // 1e-12 relative: the same sums in another order.
    expect(pruned.statistics!.overall.maxAbsErrorPmPerNrad).toBeCloseTo(largest, 12);
    expect(pruned.statistics!.overall.maxAbsErrorPmPerNrad).not.toBe(parent.statistics!.overall.maxAbsErrorPmPerNrad);
    // The bound and what the dropped terms were seen to add, on the uploaded wavefronts.
    expect(pruned.pruning!.droppedTtlSeenPmPerNrad).not.toBeNull();
    expect(pruned.pruning!.droppedTtlSeenPmPerNrad!).toBeLessThanOrEqual(pruned.pruning!.droppedTtlBoundPmPerNrad);
  });

  it("train into a failed run that says why, and no version, when the set cannot determine the model", async () => {
    const slug = await createTestModel(modeller);
    // Every sample leaves Noll 8 at zero: no fit can tell its coefficient (a rank-deficient design).
    const set = exactSet(40, 34);
    for (let s = 0; s < set.count; s++) set.coefficientsNm[s * J + 4] = 0;
    const maps = runTtlTask({ setup: SMALL_SETUP, nollIndices: SMALL_ZERNIKE.indices, coefficientsNm: set.coefficientsNm, count: set.count });
    const uploaded = await createGeneratingSet(modeller, slug, { fileName: "flat.npz", bytes: writeNpz(members({ ...set, x: maps.x, y: maps.y })) });
    const queued = await createTrainingRun(modeller, slug, { order: 1, generatingSet: { design: "uploaded", generatingSetId: uploaded.id }, validationSet: null });
    const { run } = await waitForRun(modeller, queued.id);
    expect(run.state).toBe("failed");
    expect(run.error).toMatch(/design matrix is rank deficient: term Z8 is zero in every sample/);
    expect(run.version).toBeNull();
    expect(run.log.at(-1)?.level).toBe("error");
    const [count] = await db()("model_versions").join("models", "models.id", "model_versions.model_id").where("models.slug", slug).count({ n: "*" });
    expect(Number(count.n)).toBe(0);
  });

  describe("refuse every malformed file with its reason and store nothing", () => {
    const set = exactSet(30, 33);
    const good = members(set);
    const nan = new Float64Array(set.x);
    nan[17] = Number.NaN;
    const inf = new Float64Array(set.coefficientsNm);
    inf[3] = Number.POSITIVE_INFINITY;
    const shiftedTheta = Float64Array.from(theta, (t, i) => (i === 2 ? t * (1 + 1e-6) : t));
    const archive = writeNpz(good);
    const cases: [string, Uint8Array, RegExp][] = [
      ["a missing member", writeNpz({ ...good, ttl_y_pm_per_nrad: undefined! } as never), /no member ttl_y_pm_per_nrad/],
      ["integer maps", writeNpz({ ...good, ttl_x_pm_per_nrad: writeNpy("<i4", [30, M, M], new Int32Array(30 * M * M)) }), /ttl_x_pm_per_nrad must be float32 or float64, not <i4/],
      ["float indices", writeNpz({ ...good, noll_indices: writeNpy("<f8", [J], [4, 5, 6, 7, 8]) }), /noll_indices must be an integer array/],
      ["a wrong shape", writeNpz({ ...good, coefficients_nm: writeNpy("<f8", [15, 2 * J], set.coefficientsNm) }), /coefficients_nm must have shape \(S, 5\), not \(15, 10\)/],
      ["maps of another sample count", writeNpz({ ...good, ttl_x_pm_per_nrad: writeNpy("<f8", [29, M, M], set.x.subarray(0, 29 * M * M)) }), /ttl_x_pm_per_nrad must have shape \(30, 9, 9\), not \(29, 9, 9\)/],
      ["a NaN", writeNpz({ ...good, ttl_x_pm_per_nrad: writeNpy("<f8", [30, M, M], nan) }), /ttl_x_pm_per_nrad holds NaN or infinity \(element 17\)/],
      ["an infinity", writeNpz({ ...good, coefficients_nm: writeNpy("<f8", [30, J], inf) }), /coefficients_nm holds NaN or infinity \(element 3\)/],
      ["another grid", writeNpz({ ...good, theta_nrad: writeNpy("<f8", [M], shiftedTheta) }), /theta_nrad\[2\] is .* but the model's grid has -30/],
      ["another index set", writeNpz({ ...good, noll_indices: writeNpy("<i4", [J], [4, 5, 6, 7, 9]) }), /must be, as a set, the model's Zernike set/],
      ["a repeated index", writeNpz({ ...good, noll_indices: writeNpy("<i4", [J], [4, 5, 6, 7, 7]) }), /noll_indices lists Noll term 7 more than once/],
      ["a truncated archive", archive.subarray(0, Math.floor(archive.length / 2)), /not a readable \.npz \(zip\) archive/],
      ["something that is not a zip", new TextEncoder().encode("ttl,x,y\n1,2,3\n"), /not a readable \.npz \(zip\) archive/],
    ];
    it.each(cases)("%s", async (_name, bytes, message) => {
      const slug = await createTestModel(modeller);
      const before = await countSets();
      await expect(createGeneratingSet(modeller, slug, { fileName: "bad.npz", bytes })).rejects.toMatchObject({ status: 422, message: expect.stringMatching(message) });
      expect(await countSets()).toBe(before);
    });

    it("a file over the size limit (413)", async () => {
      const slug = await createTestModel(modeller);
      const before = await countSets();
      await expect(createGeneratingSet(modeller, slug, { fileName: "big.npz", bytes: archive }, archive.length - 1)).rejects.toMatchObject({ status: 413 });
      expect(await countSets()).toBe(before);
    });

    it("an archive that inflates past the limit, refused before it is inflated", async () => {
      const slug = await createTestModel(modeller);
      // 8 MB of zeros deflates to a few kB: a small file whose content is far larger than the limit allows.
      const bomb = zipSync({ "padding.npy": [writeNpy("<f8", [1_000_000], new Float64Array(1_000_000)), { level: 9 }] });
      expect(bomb.length).toBeLessThan(100_000);
      const before = await countSets();
      await expect(createGeneratingSet(modeller, slug, { fileName: "bomb.npz", bytes: bomb }, 1_000_000)).rejects.toThrow(/inflates to more than the 2000000 bytes allowed/);
      expect(await countSets()).toBe(before);
    });
  });
});
