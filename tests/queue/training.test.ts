import { spawnSync } from "node:child_process";
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Actor } from "@/lib/access/actor";
import { closeDb, db } from "@/lib/db/knex";
import { loadModel } from "@/lib/db/models";
import { cancelRun } from "@/lib/db/runs";
import { getVersion, loadSurrogate } from "@/lib/db/versions";
import { runTtlTask } from "@/lib/parallel/ttlTask";
import { closeQueueClients } from "@/lib/queue/enqueue";
import type { WorkerHandle } from "@/lib/queue/worker";
import { createTrainingRun } from "@/lib/registry/training";
import { exportCoefficients } from "@/lib/registry/exports";
import { coefficientsSha256 } from "@/lib/surrogate/modelFile";
import { evaluateMap } from "@/lib/surrogate/evaluate";
import { trainSurrogate } from "@/lib/surrogate/train";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";
import { SOFTWARE_VERSION } from "@/lib/version";
import { actorFor, createTestModel, inProcessWorker, SMALL_SETUP, SMALL_ZERNIKE, waitForRun } from "../helpers/registry";
import { testDatabaseName } from "../helpers/test-database";

testDatabaseName();

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

const request = {
  order: 2 as const,
  generatingSet: { design: "random" as const, size: 90, maxRmsNm: 30, seed: 7 },
  validationSet: { size: 40, maxRmsNm: 30, seed: 8 },
};

const hasNumpy = spawnSync("python3", ["-c", "import numpy"], { encoding: "utf8" }).status === 0;

describe("a training run on the queue", () => {
  let slug: string;
  let version: number;

  it("goes queued -> running -> succeeded and leaves a draft whose checksum verifies", async () => {
    slug = await createTestModel(modeller);
    const queued = await createTrainingRun(modeller, slug, request);
    expect(queued).toMatchObject({ kind: "training", state: "queued", model: slug, version: null, progress: { done: 0, total: 130 } });
    const { seen, run } = await waitForRun(modeller, queued.id);
    expect(run.state).toBe("succeeded");
    // Polling can miss a short state, but never sees them out of order.
    expect(["queued", "running", "succeeded"]).toEqual(expect.arrayContaining(seen));
    expect(seen[seen.length - 1]).toBe("succeeded");
    expect(run.progress).toMatchObject({ done: 130, total: 130, fraction: 1 });
    expect(run.log.map((l) => l.message).join("\n")).toMatch(/succeeded: version 1 \(draft\)/);
    expect(run.version).toBe(1);
    version = run.version!;
    const detail = await getVersion(modeller, slug, version);
    expect(detail).toMatchObject({ state: "draft", order: 2, termCount: 21, createdBy: "modeller@velora.test", runId: run.id });
    expect(detail.history).toEqual([expect.objectContaining({ state: "draft", by: "modeller@velora.test" })]);
    // decodeModel checks the file's own SHA-256; the registry's record must name the same coefficients.
    const { surrogate } = await loadSurrogate(modeller, slug, version);
    expect(coefficientsSha256(surrogate)).toBe(detail.coefficientsSha256);
    // Chunks are gone once the run has produced its version.
    expect(await db()("run_chunks").where({ run_id: run.id }).count({ n: "*" })).toEqual([{ n: 0 }]);
  });

  it("stores the same model that lib/surrogate trains in one process from the same spec", async () => {
    const { surrogate } = await loadSurrogate(modeller, slug, version);
    const direct = await trainSurrogate(
      { setup: SMALL_SETUP, zernike: SMALL_ZERNIKE, ...request, softwareVersion: SOFTWARE_VERSION, createdAt: surrogate.provenance.createdAt },
      async (noll, coefficientsNm) => ({ ...runTtlTask({ setup: SMALL_SETUP, nollIndices: noll, coefficientsNm, count: coefficientsNm.length / noll.length }), undefinedNodes: [] }),
    );
    // Bit for bit: the chunks are the same deterministic propagation, the fit the same factorisation.
    expect(Array.from(surrogate.coefficients)).toEqual(Array.from(direct.model.coefficients));
    expect(surrogate.terms).toEqual(direct.model.terms);
    expect(surrogate.statistics).toEqual(direct.model.statistics);
    expect(surrogate.validity).toEqual(direct.model.validity);
  });

  it.skipIf(!hasNumpy)("exports an .npz from which NumPy alone computes the same maps", async () => {
    const { surrogate } = await loadSurrogate(modeller, slug, version);
    const file = await exportCoefficients(modeller, slug, version, "npz");
    expect(file.fileName).toBe(`${slug}-v${version}.npz`);
    const dir = mkdtempSync(join(tmpdir(), "stillpoint-npz-"));
    writeFileSync(join(dir, "model.npz"), file.bytes);
    const a = { 4: 7.5, 5: -3.25, 6: 2, 7: 11, 8: -6 };
    // The map formula of API.md, written with NumPy alone (an independent implementation of the evaluation).
    const script = `
import json, sys, numpy as np
z = np.load(sys.argv[1])
a = {int(k): v for k, v in json.loads(sys.argv[2]).items()}
meta = json.loads(z["metadata.json"].decode())  # numpy.load hands a plain member back as bytes
def f(t): return np.prod([a[i] for i in t if i != 0]) if any(t) else 1.0
w = np.array([f(t) for t in z["terms"]], dtype=np.float64)
cx = np.tensordot(w, z["coefficients_x"].astype(np.float64), axes=1)
cy = np.tensordot(w, z["coefficients_y"].astype(np.float64), axes=1)
sx = np.tensordot(np.abs(w), np.abs(z["coefficients_x"].astype(np.float64)), axes=1)
sy = np.tensordot(np.abs(w), np.abs(z["coefficients_y"].astype(np.float64)), axes=1)
print(json.dumps({"meta": meta, "x": cx.tolist(), "y": cy.tolist(), "sx": sx.tolist(), "sy": sy.tolist(), "terms": len(w), "theta": z["theta_nrad"].tolist(), "noll": z["noll_indices"].tolist(),
  "dtypes": [str(z[k].dtype) for k in ["theta_nrad", "noll_indices", "terms", "coefficients_x", "coefficients_y"]]}))
`;
    const out = spawnSync("python3", ["-c", script, join(dir, "model.npz"), JSON.stringify(a)], { encoding: "utf8" });
    expect(out.stderr).toBe("");
    const numpy = JSON.parse(out.stdout) as {
      meta: Record<string, unknown>; x: number[][]; y: number[][]; sx: number[][]; sy: number[][]; terms: number;
      theta: number[]; noll: number[]; dtypes: string[];
    };
    expect(numpy.meta).toMatchObject({ model: slug, version, state: "draft", order: 2, notice: SURROGATE_NOTICE });
    expect(numpy.meta.coefficientsSha256).toBe(file.coefficientsSha256);
    expect(numpy.dtypes).toEqual(["float64", "int32", "int32", "float32", "float32"]);
    expect(numpy.noll).toEqual([4, 5, 6, 7, 8]);
    expect(numpy.theta).toEqual([-60, -45, -30, -15, 0, 15, 30, 45, 60]);
    const ours = evaluateMap(surrogate, [7.5, -3.25, 2, 11, -6]);
    const M = 9;
    // The stored (float32) model is evaluated in float32 (lib/kernels): features rounded once, then a float32
    // sum of T terms, within gamma_(T+1)(2^-24) sum_t |w_t| |C_t| of NumPy's float64 sum, itself within
    // gamma_T(2^-53) of the exact one (Higham, Accuracy and Stability, 2nd ed., eq. 3.5).
    const gamma = (n: number, u: number) => (n * u) / (1 - n * u);
    const bound = (scale: number) => (gamma(numpy.terms + 1, 2 ** -24) + gamma(numpy.terms, 2 ** -53)) * scale;
    for (let iy = 0; iy < M; iy++) {
      for (let ix = 0; ix < M; ix++) {
        expect(Math.abs(numpy.x[iy][ix] - ours.x[iy * M + ix])).toBeLessThanOrEqual(bound(numpy.sx[iy][ix]));
        expect(Math.abs(numpy.y[iy][ix] - ours.y[iy * M + ix])).toBeLessThanOrEqual(bound(numpy.sy[iy][ix]));
      }
    }
  });

  it("is refused before queuing when the generating set is too small for the terms", async () => {
    const small = await createTestModel(modeller);
    await expect(createTrainingRun(modeller, small, { ...request, generatingSet: { design: "random", size: 10, maxRmsNm: 30, seed: 1 } })).rejects.toThrow(
      /10 samples but a second-order model of 5 terms has 21 coefficients per node; at least 21 samples are needed/,
    );
    const model = await loadModel(small);
    expect(await db()("runs").where({ model_id: model!.id }).count({ n: "*" })).toEqual([{ n: 0 }]);
  });

  it("can be cancelled, and then writes no version", async () => {
    const other = await createTestModel(modeller);
    await worker.close();
    try {
      const queued = await createTrainingRun(modeller, other, request);
      const cancelled = await cancelRun(modeller, queued.id);
      expect(cancelled.state).toBe("cancelled");
      await expect(cancelRun(modeller, queued.id)).rejects.toThrow(/only a queued or running run can be cancelled/);
    } finally {
      worker = inProcessWorker();
    }
    // The worker finds the jobs of a cancelled run and skips them.
    await new Promise((resolve) => setTimeout(resolve, 1500));
    const model = await loadModel(other);
    expect(await db()("model_versions").where({ model_id: model!.id }).count({ n: "*" })).toEqual([{ n: 0 }]);
  });
});
