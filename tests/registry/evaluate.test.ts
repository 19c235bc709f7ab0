import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Actor } from "@/lib/access/actor";
import { closeDb, db } from "@/lib/db/knex";
import { loadModel } from "@/lib/db/models";
import { reviewVersion } from "@/lib/db/reviews";
import { createToken, authenticateToken, flushTokenUsage } from "@/lib/db/tokens";
import { evaluationTarget, insertVersion, retireVersion, submitVersion } from "@/lib/db/versions";
import { nollToAnsi } from "@/lib/optics/zernike";
import { runTtlTask } from "@/lib/parallel/ttlTask";
import { createComputePool, type ComputePool } from "@/lib/parallel/computePool";
import { evaluateWavefronts, modelCache, warmComputePool, warmModelCache } from "@/lib/registry/evaluate";
import { evaluateMap } from "@/lib/surrogate/evaluate";
import { encodeModel } from "@/lib/surrogate/modelFile";
import type { SurrogateModel } from "@/lib/surrogate/model";
import { trainSurrogate } from "@/lib/surrogate/train";
import { evaluateBodySchema } from "@/lib/validation/evaluate";
import { actorFor, createTestModel, SMALL_SETUP, SMALL_ZERNIKE } from "../helpers/registry";
import { testDatabaseName } from "../helpers/test-database";

testDatabaseName();

let modeller: Actor;
let reviewer: Actor;
let admin: Actor;
let viewer: Actor;
let slug: string;
let surrogate: SurrogateModel;
let pool: ComputePool;
const M = SMALL_SETUP.farField.pointsPerAxis;
const nodes = M * M;

beforeAll(async () => {
  modeller = await actorFor("modeller@velora.test");
  reviewer = await actorFor("reviewer@velora.test");
  admin = await actorFor("admin@velora.test");
  viewer = await actorFor("viewer@velora.test");
  pool = createComputePool({ threads: 2 });
  slug = await createTestModel(modeller);
  const trained = await trainSurrogate(
    {
      setup: SMALL_SETUP, zernike: SMALL_ZERNIKE, order: 2, generatingSet: { design: "random", size: 80, maxRmsNm: 20, seed: 3 },
      validationSet: null, softwareVersion: "test", createdAt: "2026-12-01T00:00:00.000Z",
    },
    async (noll, coefficientsNm) => ({ ...runTtlTask({ setup: SMALL_SETUP, nollIndices: noll, coefficientsNm, count: coefficientsNm.length / noll.length }), undefinedNodes: [] }),
  );
  surrogate = trained.model;
  const model = (await loadModel(slug))!;
  for (let v = 0; v < 3; v++) {
    await db().transaction((trx) => insertVersion(trx, { model, surrogate, file: encodeModel(surrogate), createdBy: modeller.userId }));
  }
  for (const v of [1, 2]) {
    await submitVersion(modeller, slug, v);
    await reviewVersion(reviewer, slug, v, { decision: "approve", comment: null });
  }
});

afterAll(async () => {
  await pool?.close();
  await closeDb();
});

const body = (raw: unknown) => evaluateBodySchema.parse(raw);
const wavefront = { ordering: "noll", coefficientsNm: { "4": 3.2, "5": -1.5, "8": 6 } };
const vector = [3.2, -1.5, 0, 0, 6];

describe("evaluating a pinned version", () => {
  it("answers maps equal to lib/surrogate, with the version, its checksum and the notice", async () => {
    const answer = await evaluateWavefronts(viewer, slug, 1, body({ wavefronts: [wavefront], jitterNrad: 8 }));
    expect(answer.head).toMatchObject({ model: slug, version: 1, state: "released" });
    expect(answer.head.coefficientsSha256).toMatch(/^[0-9a-f]{64}$/);
    expect(answer.notice).toMatch(/engineering estimates/);
    const direct = evaluateMap(surrogate, vector);
    const [result] = answer.results;
    // Same code path (evaluateInto) on the same float32 coefficients: equal to the last bit.
    expect(result.ttlXPmPerNrad!.flat()).toEqual(Array.from(direct.x));
    expect(result.ttlYPmPerNrad!.flat()).toEqual(Array.from(direct.y));
    let peak = 0;
    let noise = 0;
    for (let n = 0; n < nodes; n++) {
      peak = Math.max(peak, Math.abs(direct.x[n]), Math.abs(direct.y[n]));
      noise = Math.max(noise, Math.hypot(direct.x[n], direct.y[n]));
    }
    expect(result.peakAbsTtlPmPerNrad).toBe(peak);
    // PHYSICS.md section 6: length noise j sqrt(c_x^2 + c_y^2) for independent jitter j on each axis.
    expect(result.peakLengthNoisePm).toBeCloseTo(8 * noise, 12);
    expect(result.validity).toEqual({ inRange: true, warnings: [] });
  });

  it("gives the node values at the nodes for offsets, and the peak alone for summary", async () => {
    const theta = [-60, -45, -30, -15, 0, 15, 30, 45, 60];
    const offsets = [[theta[1], theta[6]], [theta[4], theta[4]], [theta[8], theta[0]]];
    const answer = await evaluateWavefronts(viewer, slug, 1, body({ wavefronts: [wavefront], output: "offsets", offsetsNrad: offsets }));
    const direct = evaluateMap(surrogate, vector);
    const idx = [[1, 6], [4, 4], [8, 0]];
    answer.results[0].offsets!.forEach((o, k) => {
      const [ix, iy] = idx[k];
      // Keys' cubic kernel is 1 at its own node and 0 at the others (R. G. Keys, IEEE Trans. ASSP 29, 1153 (1981)).
      expect(o.ttlXPmPerNrad).toBeCloseTo(direct.x[iy * M + ix], 12);
      expect(o.ttlYPmPerNrad).toBeCloseTo(direct.y[iy * M + ix], 12);
    });
    expect(answer.results[0].ttlXPmPerNrad).toBeUndefined();
    const summary = await evaluateWavefronts(viewer, slug, 1, body({ wavefronts: [wavefront], output: "summary" }));
    expect(Object.keys(summary.results[0]).sort()).toEqual(["peakAbsTtlPmPerNrad", "peakAt", "validity"]);
  });

  it("gives a wavefront in ANSI indices the answer of its Noll twin", async () => {
    const ansi = { ordering: "ansi", coefficientsNm: Object.fromEntries(Object.entries(wavefront.coefficientsNm).map(([noll, v]) => [String(nollToAnsi(Number(noll))), v])) };
    const [a, b] = (await evaluateWavefronts(viewer, slug, 1, body({ wavefronts: [wavefront, ansi] }))).results;
    expect(b.ttlXPmPerNrad).toEqual(a.ttlXPmPerNrad);
    expect(b.ttlYPmPerNrad).toEqual(a.ttlYPmPerNrad);
  });

  it("evaluates a large batch on the worker pool to the same numbers", async () => {
    const wavefronts = Array.from({ length: 300 }, (_, i) => ({ ordering: "noll", coefficientsNm: { "4": Math.sin(i) * 10, "6": Math.cos(i) * 5, "7": i % 7 } }));
    const pooled = await evaluateWavefronts(viewer, slug, 1, body({ wavefronts, output: "map" }), { pool });
    const here = await evaluateWavefronts(viewer, slug, 1, body({ wavefronts, output: "map" }), { pool: null });
    for (let i = 0; i < 300; i += 37) {
      // The blocked batch product sums in another order than a single map: float64 rounding only.
      const a = pooled.results[i].ttlXPmPerNrad!.flat();
      const b = here.results[i].ttlXPmPerNrad!.flat();
      a.forEach((v, n) => expect(Math.abs(v - b[n])).toBeLessThan(1e-12 * Math.max(1, Math.abs(b[n]))));
    }
  });

  it("summarises a large batch in the workers to the numbers of the maps made here", async () => {
    const wavefronts = Array.from({ length: 300 }, (_, i) => ({ ordering: "noll", coefficientsNm: { "4": Math.sin(i) * 10, "6": Math.cos(i) * 5, "7": i % 7 } }));
    const pooled = await evaluateWavefronts(viewer, slug, 1, body({ wavefronts, output: "summary", jitterNrad: 8 }), { pool });
    const here = await evaluateWavefronts(viewer, slug, 1, body({ wavefronts, output: "map", jitterNrad: 8 }), { pool: null });
    for (let i = 0; i < 300; i += 13) {
      const maps = [here.results[i].ttlXPmPerNrad!.flat(), here.results[i].ttlYPmPerNrad!.flat()];
      // Definition of the summary (API.md "Evaluate"), from the maps: peak |TTL| over both axes and its node.
      const peak = Math.max(...maps[0].map(Math.abs), ...maps[1].map(Math.abs));
      const noise = 8 * Math.sqrt(Math.max(...maps[0].map((cx, n) => cx * cx + maps[1][n] ** 2)));
      const got = pooled.results[i];
      expect(got.ttlXPmPerNrad).toBeUndefined();
      // The blocked batch product sums in another order than a single map: float64 rounding only.
      expect(Math.abs(got.peakAbsTtlPmPerNrad - peak)).toBeLessThan(1e-12 * peak);
      expect(Math.abs(got.peakLengthNoisePm! - noise)).toBeLessThan(1e-12 * noise);
      const [ix, iy] = [here.head.thetaNrad.indexOf(got.peakAt.thetaXNrad), here.head.thetaNrad.indexOf(got.peakAt.thetaYNrad)];
      const atPeak = (got.peakAt.axis === "x" ? maps[0] : maps[1])[iy * here.head.thetaNrad.length + ix];
      expect(Math.abs(Math.abs(atPeak) - peak)).toBeLessThan(1e-12 * peak);
    }
  });

  it("flags wavefronts outside the validity range, and refuses them with strict", async () => {
    const outside = { ordering: "noll", coefficientsNm: { "4": 80 } };
    const answer = await evaluateWavefronts(viewer, slug, 1, body({ wavefronts: [wavefront, outside], output: "summary" }));
    expect(answer.results[1].validity.inRange).toBe(false);
    expect(answer.results[1].validity.warnings.join(" ")).toMatch(/total RMS 80 nm is above the model's validity limit/);
    await expect(evaluateWavefronts(viewer, slug, 1, body({ wavefronts: [wavefront, outside], strict: true }))).rejects.toMatchObject({
      status: 422,
      issues: [expect.objectContaining({ path: "wavefronts.1" })],
    });
  });

  it("refuses coefficients so large that the polynomial overflows with 422, not a server error", async () => {
    const huge = { ordering: "noll", coefficientsNm: { "4": 1e200, "5": 1e200 } };
    await expect(evaluateWavefronts(viewer, slug, 1, body({ wavefronts: [huge] }))).rejects.toMatchObject({ status: 422, message: expect.stringMatching(/not finite/) });
  });

  it("names a term outside the model's set and an offset outside the map", async () => {
    await expect(evaluateWavefronts(viewer, slug, 1, body({ wavefronts: [wavefront, { ordering: "noll", coefficientsNm: { "11": 1 } }] }))).rejects.toMatchObject({
      status: 422,
      issues: [{ path: "wavefronts.1.coefficientsNm", message: "Noll term 11 is not in this model's Zernike set" }],
    });
    await expect(evaluateWavefronts(viewer, slug, 1, body({ wavefronts: [wavefront], output: "offsets", offsetsNrad: [[0, 61]] }))).rejects.toMatchObject({
      status: 422,
      issues: [{ path: "offsetsNrad.0", message: "offset (0, 61) nrad is outside the map (|theta| <= 60 nrad)" }],
    });
  });

  it("lets a token evaluate released versions only, and signed-in modellers drafts", async () => {
    const created = await createToken(viewer, { name: "evaluate", scopes: ["evaluate"], expiresAt: null, models: null });
    const tool = (await authenticateToken(created.token)) as Actor;
    expect((await evaluateWavefronts(tool, slug, 1, body({ wavefronts: [wavefront], output: "summary" }))).head.state).toBe("released");
    await expect(evaluateWavefronts(tool, slug, 3, body({ wavefronts: [wavefront] }))).rejects.toMatchObject({ status: 403 });
    await expect(evaluateWavefronts(viewer, slug, 3, body({ wavefronts: [wavefront] }))).rejects.toMatchObject({ status: 403 });
    expect((await evaluateWavefronts(modeller, slug, 3, body({ wavefronts: [wavefront], output: "summary" }))).head.state).toBe("draft");
    const readOnly = (await authenticateToken((await createToken(viewer, { name: "read", scopes: ["read"], expiresAt: null, models: null })).token)) as Actor;
    await expect(evaluateWavefronts(readOnly, slug, 1, body({ wavefronts: [wavefront] }))).rejects.toMatchObject({ status: 403 });
    await flushTokenUsage();
    const [usage] = await db()("token_version_usage").where({ token_id: created.id });
    expect(usage).toMatchObject({ requests: 1, wavefronts: 1 });
  });

  it("answers a retired version with Deprecation, Sunset and Link until its sunset, and 410 after it", async () => {
    const retiredAt = new Date("2026-12-01T12:00:00Z");
    const sunsetAt = "2027-03-01T00:00:00.000Z";
    await retireVersion(admin, slug, 1, { reason: "superseded", sunsetAt, successorVersion: 2 }, retiredAt);
    const before = await evaluateWavefronts(viewer, slug, 1, body({ wavefronts: [wavefront], output: "summary" }), { now: new Date("2027-02-28T23:59:59Z") });
    expect(before.head.state).toBe("retired");
    // RFC 9745: "@" and the Unix time of the deprecation (here the injected time of retirement).
    expect(before.headers.deprecation).toBe(`@${retiredAt.getTime() / 1000}`);
    expect(before.headers.sunset).toBe("Mon, 01 Mar 2027 00:00:00 GMT"); // RFC 8594: an HTTP-date
    expect(before.headers.link).toBe(`</api/v1/models/${slug}/versions/2>; rel="successor-version"`);
    await expect(evaluateWavefronts(viewer, slug, 1, body({ wavefronts: [wavefront] }), { now: new Date("2027-03-01T00:00:00Z") })).rejects.toMatchObject({
      status: 410,
      message: expect.stringMatching(/Its successor is version 2/),
    });
    const successor = await evaluateWavefronts(viewer, slug, 2, body({ wavefronts: [wavefront], output: "summary" }));
    expect(successor.headers).toEqual({});
  });
});

describe("warmModelCache", () => {
  it("decodes each listed version into the cache and runs it through every output once", async () => {
    const target = (await evaluationTarget(slug, 2))!;
    const key = `${target.versionId}:${target.coefficientsSha256}`;
    const lines: string[] = [];
    await warmModelCache(async () => [target], (line) => lines.push(line));
    expect(lines).toEqual([expect.stringMatching(/^\[stillpoint\] 1 released model versions decoded and evaluated once in \d+ ms$/)]);
    // In the cache now: a get with a loader that fails finds the decoded model without calling it.
    const cached = await modelCache().get(key, () => Promise.reject(new Error("not cached")));
    expect(cached.nollIndices).toEqual(surrogate.nollIndices);
  });

  it("logs a failure to list and leaves the cache as it was", async () => {
    const lines: string[] = [];
    const size = modelCache().size;
    await warmModelCache(() => Promise.reject(new Error("database unreachable")), (line) => lines.push(line));
    expect(lines).toEqual(["[stillpoint] could not warm the model cache: database unreachable"]);
    expect(modelCache().size).toBe(size);
  });
});

describe("warmComputePool", () => {
  it("gives each model to the pool's threads once and says so; a failure is logged, not thrown", async () => {
    const lines: string[] = [];
    await warmComputePool([surrogate], pool, (line) => lines.push(line));
    expect(lines).toEqual([expect.stringMatching(/^\[stillpoint\] compute pool \(2 threads\) ready with 1 models in \d+ ms$/)]);
    // A pool whose threads cannot start.
    const broken = { threads: 2, summariseBatch: () => Promise.reject(new Error("worker failed to start")) } as unknown as ComputePool;
    const failures: string[] = [];
    await warmComputePool([surrogate], broken, (line) => failures.push(line));
    expect(failures).toEqual(["[stillpoint] could not warm the compute pool: worker failed to start"]);
  });
});
