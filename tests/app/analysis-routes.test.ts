import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/lib/db/knex";
import { createToken } from "@/lib/db/tokens";
import { getVersion } from "@/lib/db/versions";
import { writeNpy } from "@/lib/formats/npy";
import { closeQueueClients } from "@/lib/queue/enqueue";
import type { WorkerHandle } from "@/lib/queue/worker";
import { createTrainingRun } from "@/lib/registry/training";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";
import { startAppServer, type AppServer } from "../helpers/app-server";
import { actorFor, createTestModel, inProcessWorker, waitForRun } from "../helpers/registry";

// The analysis routes of API.md against the production build and the seeded demo model (version 2, released; version 4,
// a first-order draft), and the two queue runs (requirements -> monte-carlo, prune -> pruning) with a worker here.

let server: AppServer;
let worker: WorkerHandle;
let readToken = "";
let trainToken = "";
const released = "/api/v1/models/velora-transmit/versions/2";

beforeAll(async () => {
  server = await startAppServer();
  worker = inProcessWorker(`analysis-${process.pid}`);
  const modeller = await actorFor("modeller@velora.test");
  readToken = (await createToken(modeller, { name: `analysis-read-${process.pid}`, scopes: ["read"], expiresAt: null, models: null })).token;
  trainToken = (await createToken(modeller, { name: `analysis-train-${process.pid}`, scopes: ["read", "train"], expiresAt: null, models: null })).token;
});

afterAll(async () => {
  await worker?.close(true);
  await server?.close();
  await closeQueueClients();
  await closeDb();
});

type Json = Record<string, any>; // eslint-disable-line @typescript-eslint/no-explicit-any

async function post(path: string, body: unknown, token = readToken): Promise<{ status: number; body: Json }> {
  const response = await fetch(`${server.baseUrl}${path}`, {
    method: "POST",
    headers: { "content-type": "application/json", authorization: `Bearer ${token}` },
    body: JSON.stringify(body),
  });
  return { status: response.status, body: (await response.json()) as Json };
}

const flat = (grid: number[][]) => grid.flat();

describe("POST .../worst-case", () => {
  it("answers the bound and exact maps on the demo model, and its wavefront reaches the worst value through /evaluate", async () => {
    const began = performance.now();
    const answer = await post(`${released}/worst-case`, { budgetRmsNm: 30, jitterNrad: 8 });
    const ms = performance.now() - began;
    expect(answer.status).toBe(200);
    const body = answer.body;
    console.log(`[worst case] demo v2, 25 x 25 nodes, 2 axes, J = 33: ${Math.round(ms)} ms round trip, ${body.computeMs} ms on the pool; worst ${body.worst.valuePmPerNrad} pm/nrad, peak bound ${body.peakBoundPmPerNrad}`);
    expect(body.model).toBe("velora-transmit");
    expect(body.version).toBe(2);
    expect(body.coefficientsSha256).toMatch(/^[0-9a-f]{64}$/);
    expect(body.notice).toBe(SURROGATE_NOTICE);
    const bound = [...flat(body.boundPmPerNrad.x), ...flat(body.boundPmPerNrad.y)];
    const exact = [...flat(body.exactPmPerNrad.x), ...flat(body.exactPmPerNrad.y)];
    expect(exact.every((v, k) => v <= bound[k] * (1 + 1e-12))).toBe(true);
    expect(body.worst.valuePmPerNrad).toBe(Math.max(...exact));
    const coefficients = Object.values(body.worst.wavefront.coefficientsNm) as number[];
    expect(Math.abs(Math.hypot(...coefficients) - 30)).toBeLessThan(1e-9);
    // The same wavefront through the evaluate route (which needs the evaluate scope).
    const modeller = await actorFor("modeller@velora.test");
    const evaluateToken = (await createToken(modeller, { name: `analysis-evaluate-${process.pid}`, scopes: ["evaluate"], expiresAt: null, models: null })).token;
    const evaluated = await post(`${released}/evaluate`, { wavefronts: [body.worst.wavefront], output: "summary", jitterNrad: 8 }, evaluateToken);
    expect(evaluated.status).toBe(200);
    // The model evaluates a stored (float32) version in float32: within 1e-5 relative of the float64 solution
    // (Higham's bound gamma_T sum |f_t||C_t| for T = 596 terms, u = 2^-24, is of that order here).
    expect(Math.abs(evaluated.body.results[0].peakAbsTtlPmPerNrad - body.worst.valuePmPerNrad)).toBeLessThan(1e-5 * body.worst.valuePmPerNrad);
    expect(evaluated.body.results[0].peakAt).toEqual({ thetaXNrad: body.worst.thetaXNrad, thetaYNrad: body.worst.thetaYNrad, axis: body.worst.axis });
    expect(body.worst.lengthNoisePm).toBeGreaterThanOrEqual(8 * body.worst.valuePmPerNrad * (1 - 1e-6));
  });

  it("refuses a bad budget with the field named", async () => {
    const answer = await post(`${released}/worst-case`, { budgetRmsNm: -1 });
    expect(answer.status).toBe(422);
    expect(answer.body.issues[0].path).toBe("budgetRmsNm");
  });
});

describe("POST .../modes, .../correction, .../noise", () => {
  it("answers 33 orthonormal modes strongest first, and splits a wavefront's linear TTL over them", async () => {
    const answer = await post(`${released}/modes`, { wavefront: { ordering: "noll", coefficientsNm: { "4": 5, "6": -3 } } });
    expect(answer.status).toBe(200);
    const modes = answer.body.modes as Json[];
    expect(modes).toHaveLength(33);
    for (let k = 1; k < 33; k++) expect(modes[k].singularValue).toBeLessThanOrEqual(modes[k - 1].singularValue);
    const vector = (m: Json) => Array.from({ length: 33 }, (_, i) => m.coefficientsNm[String(i + 4)] as number);
    const dot = (a: number[], b: number[]) => a.reduce((s, v, i) => s + v * b[i], 0);
    expect(Math.abs(dot(vector(modes[0]), vector(modes[0])) - 1)).toBeLessThan(1e-12);
    expect(Math.abs(dot(vector(modes[0]), vector(modes[1])))).toBeLessThan(1e-12);
    expect(modes.reduce((s, m) => s + m.projection.energyFraction, 0)).toBeCloseTo(1, 12);
    expect(answer.body.notice).toBe(SURROGATE_NOTICE);
  });

  it("corrects a wavefront without making the worst TTL larger, within the limit", async () => {
    const wavefront = { ordering: "noll", coefficientsNm: { "4": 8, "5": -4, "11": 6 } };
    const answer = await post(`${released}/correction`, { wavefront, adjustable: { ordering: "noll", indices: [4, 11] }, limitNm: 10 });
    expect(answer.status).toBe(200);
    expect(answer.body.after.peakAbsTtlPmPerNrad).toBeLessThanOrEqual(answer.body.before.peakAbsTtlPmPerNrad);
    for (const v of Object.values(answer.body.adjustmentNm) as number[]) expect(Math.abs(v)).toBeLessThanOrEqual(10);
    expect(Object.keys(answer.body.adjustmentNm).sort()).toEqual(["11", "4"]);
    const unknown = await post(`${released}/correction`, { wavefront, adjustable: { ordering: "noll", indices: [2] }, limitNm: 10 });
    expect(unknown.status).toBe(422);
    expect(unknown.body.issues[0].message).toBe("noll term 2 is not in this version's Zernike set");
  });

  it("gives the noise ASD sqrt(c_x^2 + c_y^2) times the jitter ASD at the worst node, with the margin in dB", async () => {
    const wavefront = { ordering: "noll", coefficientsNm: { "4": 10, "6": 5 } };
    const jitterAsd = [[0.001, 20], [0.01, 8], [0.1, 3], [1, 1]];
    const answer = await post(`${released}/noise`, { wavefront, offsetNrad: null, jitterAsd, allocation: [[0.0001, 1], [10, 0.1]] });
    expect(answer.status).toBe(200);
    const b = answer.body;
    // PHYSICS.md section 6: ASD_s = sqrt(c_x^2 + c_y^2) ASD_theta.
    jitterAsd.forEach(([, asd], k) => expect(b.ttlNoisePmPerRtHz[k]).toBeCloseTo(Math.hypot(b.ttlXPmPerNrad, b.ttlYPmPerNrad) * asd, 12));
    b.marginDb.forEach((m: number, k: number) => expect(m).toBeCloseTo(20 * Math.log10(b.allocationPmPerRtHz[k] / b.ttlNoisePmPerRtHz[k]), 10));
    expect(b.worstOffset).toBe(true);
    // The worst offset is a node where the map of the same wavefront has its largest sqrt(c_x^2 + c_y^2).
    const modeller = await actorFor("modeller@velora.test");
    const evaluateToken = (await createToken(modeller, { name: `analysis-noise-${process.pid}`, scopes: ["evaluate"], expiresAt: null, models: null })).token;
    const evaluated = await post(`${released}/evaluate`, { wavefronts: [wavefront], output: "summary", jitterNrad: 1 }, evaluateToken);
    expect(Math.hypot(b.ttlXPmPerNrad, b.ttlYPmPerNrad)).toBeCloseTo(evaluated.body.results[0].peakLengthNoisePm, 5);
    const outside = await post(`${released}/noise`, { wavefront, offsetNrad: [0, 0], jitterAsd, allocation: [[0.01, 1], [10, 0.1]] });
    expect(outside.status).toBe(422);
    expect(outside.body.issues[0].message).toBe("frequency 0.001 Hz lies outside the allocation (0.01 to 10 Hz)");
  });
});

describe("POST /wavefronts/fit", () => {
  // A map of 2 nm of defocus and -1.5 nm of Noll 6 (Noll 1976, Table I: sqrt(3)(2 rho^2 - 1), sqrt(6) rho^2 cos 2 phi)
  // plus 30 nm piston, on a 64 x 64 grid spanning the 0.26 m aperture, a NaN every 17th pixel.
  const rows = 64;
  const pixel = 0.26 / 63;
  const values = new Float64Array(rows * rows);
  for (let iy = 0; iy < rows; iy++) for (let ix = 0; ix < rows; ix++) {
    const x = (ix - 31.5) * pixel;
    const y = (iy - 31.5) * pixel;
    const rho = Math.hypot(x, y) / 0.13;
    const phi = Math.atan2(y, x);
    values[iy * rows + ix] = (iy * rows + ix) % 17 === 0 ? Number.NaN : 30 + 2 * Math.sqrt(3) * (2 * rho * rho - 1) - 1.5 * Math.sqrt(6) * rho * rho * Math.cos(2 * phi);
  }

  async function fit(file: Blob, fields: Record<string, string>) {
    const form = new FormData();
    form.set("file", file, "map");
    for (const [k, v] of Object.entries(fields)) form.set(k, v);
    const response = await fetch(`${server.baseUrl}/api/v1/wavefronts/fit`, { method: "POST", headers: { authorization: `Bearer ${readToken}` }, body: form });
    return { status: response.status, body: (await response.json()) as Json };
  }
  const fields = { pixelSizeM: String(pixel), apertureDiameterM: "0.26", zernike: JSON.stringify({ ordering: "noll", indices: [4, 5, 6] }) };

  it("returns the known coefficients from a .npy in nm and from a CSV grid in metres", async () => {
    const npy = await fit(new Blob([writeNpy("<f8", [rows, rows], values) as BlobPart]), { ...fields, units: "nm" });
    expect(npy.status).toBe(200);
    // The map lies in the span of the fitted terms: recovered to rounding.
    expect(npy.body.wavefront.coefficientsNm["4"]).toBeCloseTo(2, 9);
    expect(npy.body.wavefront.coefficientsNm["5"]).toBeCloseTo(0, 9);
    expect(npy.body.wavefront.coefficientsNm["6"]).toBeCloseTo(-1.5, 9);
    expect(npy.body.removedNm["1"]).toBeCloseTo(30, 9);
    // The pictures: one cell per pixel across the aperture (0.26 m / pixel = 63); the map's value at a cell is its
    // nearest pixel's (the closed form above), the fit equals it and the residual is zero to the 6 digits sent.
    // (Cell centres fall half-way between pixels here; the test rounds in the same operations as the code.)
    const pictures = npy.body.pictures;
    expect(pictures.samples).toBe(63);
    let drawn = 0;
    for (let iy = 0; iy < 63; iy++) for (let ix = 0; ix < 63; ix++) {
      const k = iy * 63 + ix;
      const x = (2 * ix + 1) / 63 - 1;
      const y = (2 * iy + 1) / 63 - 1;
      const px = Math.round(x * 0.13 / pixel + 31.5);
      const py = Math.round(y * 0.13 / pixel + 31.5);
      // Null where the nearest pixel was not used by the fit: no data, or its centre outside the aperture.
      if (Math.hypot(x, y) > 1 || Number.isNaN(values[py * rows + px]) || Math.hypot(px - 31.5, py - 31.5) * pixel > 0.13) {
        expect(pictures.mapNm[k]).toBeNull();
        continue;
      }
      drawn++;
      // 6 significant digits of values near 30 nm: within 1e-4 nm.
      expect(Math.abs(pictures.mapNm[k] - values[py * rows + px])).toBeLessThan(1e-4);
      expect(Math.abs(pictures.fitNm[k] - pictures.mapNm[k])).toBeLessThan(2e-4);
      expect(Math.abs(pictures.residualNm[k])).toBeLessThan(1e-6);
    }
    expect(drawn).toBeGreaterThan(2500);
    const csv = Array.from({ length: rows }, (_, iy) => Array.from(values.subarray(iy * rows, (iy + 1) * rows), (v) => (Number.isNaN(v) ? "NaN" : String(v * 1e-9))).join(",")).join("\n");
    const text = await fit(new Blob([csv]), { ...fields, units: "m" });
    expect(text.status).toBe(200);
    expect(text.body.wavefront.coefficientsNm["4"]).toBeCloseTo(2, 6);
    expect(text.body.samplesInAperture).toBe(npy.body.samplesInAperture);
  });

  it("says what is wrong with a file that is not a grid, or has no pixels inside the aperture", async () => {
    const ragged = await fit(new Blob(["1,2,3\n4,5\n"]), { ...fields, units: "nm" });
    expect(ragged.status).toBe(422);
    expect(ragged.body.detail).toBe("Row 2 of the grid has 2 values, the first row 3: not a grid (is this a file of another kind?).");
    const empty = await fit(new Blob([writeNpy("<f8", [4, 4], new Float64Array(16).fill(Number.NaN)) as BlobPart]), { ...fields, units: "nm" });
    expect(empty.status).toBe(422);
    expect(empty.body.detail).toContain("pixels with data inside the aperture");
    const cube = await fit(new Blob([writeNpy("<f8", [2, 2, 2], new Float64Array(8)) as BlobPart]), { ...fields, units: "nm" });
    expect(cube.body.detail).toBe("The .npy array has shape (2, 2, 2); a height map is 2-D (rows, columns).");
  });
});

describe("requirements and pruning on the queue", () => {
  it("derives limits for a TTL budget and verifies them by Monte Carlo: never above the budget on the model, exact TTL beside it", async () => {
    const answer = await post(`${released}/requirements`, { ttlBudgetPmPerNrad: 0.1, budgetRmsNm: 30, samples: 4096, seed: 7 });
    expect(answer.status).toBe(202);
    expect(answer.body.run.kind).toBe("monte-carlo");
    const actor = await actorFor("modeller@velora.test");
    const { run } = await waitForRun(actor, answer.body.run.id, 120_000);
    expect(run.state).toBe("succeeded");
    const result = run.result as Json;
    expect(result.notice).toBe(SURROGATE_NOTICE);
    expect(result.version).toBe(2);
    expect(Object.keys(result.linearLimitsNm)).toHaveLength(33);
    expect(Object.keys(result.crossLimitsNm2)).toHaveLength((33 * 34) / 2);
    expect(result.boundPmPerNrad).toBeLessThanOrEqual(0.1);
    // Per-term limits: the shares of the TTL budget add up to what the model leaves above its TTL at zero WFE, each
    // in proportion to its term's coupling (requirementLimits' definition), and their bound holds too.
    const shares = Object.values(result.perTerm.sharePmPerNrad as Record<string, number>);
    expect(shares.reduce((s, v) => s + v, 0)).toBeCloseTo(0.1 - result.zeroWfePeakPmPerNrad, 12);
    const couplings = result.perTerm.couplingPmPerNradPerNm as Record<string, number>;
    const couplingSum = Object.values(couplings).reduce((s, v) => s + v, 0);
    for (const [k, share] of Object.entries(result.perTerm.sharePmPerNrad as Record<string, number>)) expect(share).toBeCloseTo(((0.1 - result.zeroWfePeakPmPerNrad) * couplings[k]) / couplingSum, 12);
    expect(result.perTerm.boundPmPerNrad).toBeLessThanOrEqual(0.1);
    expect(result.verified.samples).toBe(4096);
    expect(result.verified.worstPmPerNrad).toBeLessThanOrEqual(0.1);
    expect(result.verified.budgetFractionUsed).toBeCloseTo(result.verified.worstPmPerNrad / 0.1, 12);
    expect(result.verified.histogram.counts.reduce((s: number, n: number) => s + n, 0)).toBe(4096);
    expect(result.verified.worstSamples).toHaveLength(100);
    // Reported honestly whatever they are: every worst sample carries its exact peak beside the model's.
    for (const sample of result.verified.worstSamples) {
      expect(sample.exactPeakPmPerNrad).toBeGreaterThan(0);
      expect(sample.modelPeakPmPerNrad).toBeLessThanOrEqual(0.1);
    }
    console.log(`[requirements] uniform limit ${result.linearLimitsNm["4"]} nm, worst on the model ${result.verified.worstPmPerNrad} pm/nrad, worst exact ${result.verified.exactWorstPmPerNrad} pm/nrad`);
  });

  it("prunes a version into a derived draft with its own statistics, its parent recorded, bound and seen side by side", async () => {
    const modeller = await actorFor("modeller@velora.test");
    const slug = await createTestModel(modeller);
    const training = await createTrainingRun(modeller, slug, { order: 2, generatingSet: { design: "random", size: 60, maxRmsNm: 20, seed: 3 }, validationSet: { size: 40, maxRmsNm: 20, seed: 4 } });
    expect((await waitForRun(modeller, training.id, 120_000)).run.state).toBe("succeeded");
    const answer = await post(`/api/v1/models/${slug}/versions/1/prune`, { budgetRmsNm: 20, jitterNrad: 8, thresholdPm: 0.05 }, trainToken);
    expect(answer.status).toBe(202);
    expect(answer.body.run.kind).toBe("pruning");
    const { run } = await waitForRun(modeller, answer.body.run.id, 120_000);
    expect(run.state).toBe("succeeded");
    const version = await getVersion(modeller, slug, run.version!);
    expect(version.state).toBe("draft");
    expect(version.parentVersion).toBe(1);
    const parent = await getVersion(modeller, slug, 1);
    expect(version.terms.length).toBeLessThan(parent.terms.length);
    expect(version.pruning!.droppedTtlSeenPmPerNrad).not.toBeNull();
    expect(version.pruning!.droppedTtlSeenPmPerNrad!).toBeLessThanOrEqual(version.pruning!.droppedTtlBoundPmPerNrad);
    // Its own statistics: against the same exact validation maps, with fewer terms the errors differ from the parent's.
    expect(version.statistics).not.toBeNull();
    expect(version.statistics!.overall.maxAbsErrorPmPerNrad).not.toBe(parent.statistics!.overall.maxAbsErrorPmPerNrad);
    expect((run.result as Json).droppedTtlBoundPmPerNrad).toBe(version.pruning!.droppedTtlBoundPmPerNrad);
    const viewer = await post(`/api/v1/models/${slug}/versions/1/prune`, { budgetRmsNm: 20, jitterNrad: 8, thresholdPm: 0.05 }, readToken);
    expect(viewer.status).toBe(403);
  });
});
