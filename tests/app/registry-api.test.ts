import { execFile } from "node:child_process";
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/lib/db/knex";
import { writeNpy } from "@/lib/formats/npy";
import { writeNpz } from "@/lib/formats/npz";
import { thetaGridNrad } from "@/lib/optics/setup";
import { runTtlTask } from "@/lib/parallel/ttlTask";
import { closeQueueClients } from "@/lib/queue/enqueue";
import type { WorkerHandle } from "@/lib/queue/worker";
import { randomDesign } from "@/lib/surrogate/designs";
import { decodeModel, encodeModel } from "@/lib/surrogate/modelFile";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";
import { inProcessWorker, SMALL_SETUP, SMALL_ZERNIKE } from "../helpers/registry";
import { REPO_ROOT } from "../helpers/test-database";

/** The command line as a child process; asynchronous, because the server it talks to runs in this process. */
function stillpoint(...args: string[]): Promise<{ status: number; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    execFile(process.execPath, [join(REPO_ROOT, "bin/stillpoint.mjs"), ...args], { encoding: "utf8" }, (error, stdout, stderr) =>
      resolve({ status: error ? Number((error as { code?: number }).code ?? 1) : 0, stdout, stderr }),
    );
  });
}

let server: AppServer;
let worker: WorkerHandle;
type Agent = ReturnType<AppServer["agent"]>;
let modellerSession: Agent;
let viewerSession: Agent;

beforeAll(async () => {
  server = await startAppServer();
  worker = inProcessWorker();
  modellerSession = server.agent();
  await signIn(modellerSession, "modeller@velora.test", DEMO_PASSWORD);
  viewerSession = server.agent();
  await signIn(viewerSession, "viewer@velora.test", DEMO_PASSWORD);
});

afterAll(async () => {
  await worker?.close(true);
  await server?.close();
  await closeQueueClients();
  await closeDb();
});

const tag = `${process.pid}-${Date.now().toString(36)}`;

async function tokenFor(agent: Agent, scopes: string[], models: string[] | null = null): Promise<string> {
  const response = await agent.post("/api/v1/tokens").send({ name: `test ${scopes.join(" ")}`, scopes, expiresAt: null, models }).expect(201);
  expect(response.body.token).toMatch(/^stp_[A-Za-z0-9_-]{43}$/);
  return response.body.token as string;
}

/** A client that knows nothing but the base URL and a token, like a downstream script. */
function tool(token: string) {
  const headers = { authorization: `Bearer ${token}` };
  const url = (path: string) => `${server.baseUrl}/api/v1${path}`;
  return {
    get: (path: string) => fetch(url(path), { headers }),
    post: (path: string, body: unknown) => fetch(url(path), { method: "POST", headers: { ...headers, "content-type": "application/json" }, body: JSON.stringify(body) }),
    raw: (path: string, init: RequestInit) => fetch(url(path), { ...init, headers: { ...headers, ...(init.headers as Record<string, string>) } }),
  };
}

async function waitForRun(client: ReturnType<typeof tool>, id: number): Promise<{ states: string[]; run: Record<string, any> }> {
  const states: string[] = [];
  for (let i = 0; i < 2400; i++) {
    const run = await (await client.get(`/runs/${id}`)).json();
    if (states[states.length - 1] !== run.state) states.push(run.state);
    if (!["queued", "running"].includes(run.state)) return { states, run };
    await new Promise((resolve) => setTimeout(resolve, 25));
  }
  throw new Error(`run ${id} did not end`);
}

const MODELLER_ONLY: [string, string, unknown][] = [
  ["POST", "/api/v1/setups", { name: "x", setup: SMALL_SETUP }],
  ["POST", "/api/v1/models", { slug: "never-made", name: "x", setupId: 1, zernike: SMALL_ZERNIKE }],
  ["POST", "/api/v1/models/velora-transmit/versions", { order: 1, generatingSet: { design: "random", size: 50, maxRmsNm: 10, seed: 1 } }],
  ["POST", "/api/v1/models/velora-transmit/versions/4/submit", undefined],
];

describe("the registry API refuses whoever may not act", () => {
  it.each(MODELLER_ONLY)("%s %s: 401 with a Bearer challenge for anonymous callers", async (method, path, body) => {
    const response = await fetch(`${server.baseUrl}${path}`, { method, headers: { "content-type": "application/json" }, body: body === undefined ? undefined : JSON.stringify(body) });
    expect(response.status).toBe(401);
    expect(response.headers.get("content-type")).toContain("application/problem+json");
    expect(response.headers.get("www-authenticate")).toMatch(/^Bearer/);
    expect(await response.json()).toMatchObject({ status: 401, title: "Sign-in required" });
  });

  it.each(MODELLER_ONLY)("%s %s: 403 problem details for a viewer's session", async (method, path, body) => {
    const response = await viewerSession[method.toLowerCase() as "post"](path).send(body as object);
    expect(response.status).toBe(403);
    expect(response.headers["content-type"]).toContain("application/problem+json");
    expect(response.body).toMatchObject({ status: 403, detail: "This needs the modeller role." });
  });

  it.each(MODELLER_ONLY)("%s %s: 403 for a modeller's token without the train scope", async (method, path, body) => {
    const token = await tokenFor(modellerSession, ["read", "evaluate"]);
    const response = await fetch(`${server.baseUrl}${path}`, { method, headers: { authorization: `Bearer ${token}`, "content-type": "application/json" }, body: body === undefined ? undefined : JSON.stringify(body) });
    expect(response.status).toBe(403);
    expect(await response.json()).toMatchObject({ status: 403, detail: 'This token lacks the "train" scope.' });
  });

  it("refuses unknown, malformed and revoked tokens with 401, and a token creating tokens with 403", async () => {
    const unknown = await fetch(`${server.baseUrl}/api/v1/models`, { headers: { authorization: `Bearer stp_${"A".repeat(43)}` } });
    expect(unknown.status).toBe(401);
    expect((await unknown.json()).detail).toBe("The token is not known.");
    const malformed = await fetch(`${server.baseUrl}/api/v1/models`, { headers: { authorization: "Token abc" } });
    expect(malformed.status).toBe(401);
    const token = await tokenFor(modellerSession, ["read"]);
    expect((await tool(token).get("/models")).status).toBe(200);
    expect((await tool(token).post("/tokens", { name: "child", scopes: ["read"], expiresAt: null, models: null })).status).toBe(403);
    const listed = await modellerSession.get("/api/v1/tokens").expect(200);
    const id = listed.body.items.find((t: { hint: string }) => token.startsWith(t.hint.replace("...", ""))).id;
    await modellerSession.delete(`/api/v1/tokens/${id}`).expect(204);
    const revoked = await tool(token).get("/models");
    expect(revoked.status).toBe(401);
    expect((await revoked.json()).detail).toBe("The token has been revoked.");
  });

  it("refuses a train token for a viewer at creation", async () => {
    const response = await viewerSession.post("/api/v1/tokens").send({ name: "x", scopes: ["train"], expiresAt: null, models: null });
    expect(response.status).toBe(422);
    expect(response.body.detail).toBe('The "train" scope needs the modeller role.');
  });
});

describe("a script with a modeller's token", () => {
  let client: ReturnType<typeof tool>;
  let slug: string;
  let token: string;

  beforeAll(async () => {
    token = await tokenFor(modellerSession, ["read", "train", "evaluate"]);
    client = tool(token);
  });

  it("reads the seeded demo model with its four versions", async () => {
    const response = await client.get("/models/velora-transmit");
    expect(response.status).toBe(200);
    const model = await response.json();
    expect(model.versions.map((v: { version: number; state: string; order: number }) => [v.version, v.state, v.order])).toEqual([
      [1, "retired", 2], [2, "released", 2], [3, "in-review", 2], [4, "draft", 1],
    ]);
    expect(model.latestReleasedVersion).toBe(2);
    const v3 = await (await client.get("/models/velora-transmit/versions/3")).json();
    expect(v3).toMatchObject({ parentVersion: 2, state: "in-review", notice: SURROGATE_NOTICE });
    expect(v3.termCount).toBeLessThan(595);
    const v1 = await (await client.get("/models/velora-transmit/versions/1")).json();
    expect(v1.retirement).toMatchObject({ reason: "generating set too small", successorVersion: 2 });
    expect((await client.get("/models/velora-transmit/versions/latest")).status).toBe(404);
  });

  it("defines a setup, creates a model, trains through the queue, downloads the files and submits for review", async () => {
    const setup = await client.post("/setups", { name: `api setup ${tag}`, setup: SMALL_SETUP });
    expect(setup.status).toBe(201);
    const setupItem = await setup.json();
    expect(setupItem.derived.diffractionAngleNrad).toBeCloseTo(1064 / 0.26, 6); // lambda/D: 1064e-9 / 0.26 rad in nrad
    slug = `api-${tag}`;
    const model = await client.post("/models", { slug, name: "API test model", setupId: setupItem.id, zernike: { ordering: "ansi", indices: [4, 3, 5, 7, 8] } });
    expect(model.status).toBe(201);
    expect((await client.post("/models", { slug, name: "again", setupId: setupItem.id, zernike: SMALL_ZERNIKE })).status).toBe(409);

    const bad = await client.post(`/models/${slug}/versions`, { order: 3, generatingSet: { design: "random", size: 0, maxRmsNm: -1, seed: 1.5 } });
    expect(bad.status).toBe(422);
    const problem = await bad.json();
    expect(problem.issues.map((i: { path: string }) => i.path)).toEqual(expect.arrayContaining(["order", "generatingSet.size", "generatingSet.maxRmsNm", "generatingSet.seed"]));
    expect((await client.raw(`/models/${slug}/versions`, { method: "POST", headers: { "content-type": "application/json" }, body: "{not json" })).status).toBe(400);

    const accepted = await client.post(`/models/${slug}/versions`, { order: 2, generatingSet: { design: "random", size: 60, maxRmsNm: 20, seed: 5 }, validationSet: { size: 20, maxRmsNm: 20, seed: 6 } });
    expect(accepted.status).toBe(202);
    const { run: queued } = await accepted.json();
    expect(accepted.headers.get("location")).toBe(`/api/v1/runs/${queued.id}`);
    const { run } = await waitForRun(client, queued.id);
    expect(run).toMatchObject({ state: "succeeded", version: 1, progress: { done: 80, total: 80, fraction: 1 } });
    expect(run.worker).toMatch(/^test-/);

    const stpm = await client.get(`/models/${slug}/versions/1/coefficients`);
    expect(stpm.status).toBe(200);
    expect(stpm.headers.get("content-disposition")).toBe(`attachment; filename="${slug}-v1.stpm"`);
    const version = await (await client.get(`/models/${slug}/versions/1`)).json();
    expect(stpm.headers.get("etag")).toBe(`"${version.coefficientsSha256}.stpm"`);
    const model1 = decodeModel(new Uint8Array(await stpm.arrayBuffer()));
    expect(model1.terms).toEqual(version.terms);
    const npz = await client.get(`/models/${slug}/versions/1/coefficients?format=npz`);
    expect(npz.headers.get("content-disposition")).toBe(`attachment; filename="${slug}-v1.npz"`);
    expect(npz.headers.get("content-type")).toBe("application/zip");
    expect((await client.get(`/models/${slug}/versions/1/coefficients?format=csv`)).status).toBe(422);

    const submitted = await client.post(`/models/${slug}/versions/1/submit`, {});
    expect(submitted.status).toBe(200);
    expect((await submitted.json()).state).toBe("in-review");
    const again = await client.post(`/models/${slug}/versions/1/submit`, {});
    expect(again.status).toBe(409);
    const runs = await (await client.get(`/runs?model=${slug}`)).json();
    expect(runs.items.map((r: { id: number }) => r.id)).toEqual([queued.id]);
  });

  it("uploads a generating set as multipart and trains from it", async () => {
    const M = SMALL_SETUP.farField.pointsPerAxis;
    const noll = [5, 4, 6, 7, 8]; // the model's set, in ANSI 4, 3, 5, 7, 8 = Noll 5, 4, 6, 7, 8
    const count = 40;
    const coefficientsNm = randomDesign(5, { size: count, maxRmsNm: 20, seed: 41 });
    const maps = runTtlTask({ setup: SMALL_SETUP, nollIndices: noll, coefficientsNm, count });
    const file = writeNpz({
      noll_indices: writeNpy("<i4", [5], noll),
      theta_nrad: writeNpy("<f8", [M], thetaGridNrad(SMALL_SETUP.farField)),
      coefficients_nm: writeNpy("<f4", [count, 5], coefficientsNm),
      ttl_x_pm_per_nrad: writeNpy("<f4", [count, M, M], maps.x),
      ttl_y_pm_per_nrad: writeNpy("<f4", [count, M, M], maps.y),
    });
    const form = new FormData();
    form.set("file", new Blob([file as BlobPart]), "set.npz");
    const uploaded = await client.raw(`/models/${slug}/generating-sets`, { method: "POST", body: form });
    expect(uploaded.status).toBe(201);
    const set = await uploaded.json();
    expect(set).toMatchObject({ samples: 40 });
    const notMultipart = await client.post(`/models/${slug}/generating-sets`, {});
    expect(notMultipart.status).toBe(400);

    const accepted = await client.post(`/models/${slug}/versions`, { order: 1, generatingSet: { design: "uploaded", generatingSetId: set.id }, validationSet: null });
    expect(accepted.status).toBe(202);
    const { run } = await waitForRun(client, (await accepted.json()).run.id);
    expect(run).toMatchObject({ state: "succeeded", version: 2 });
  });

  it("pushes a locally trained model with the command line and refuses one made for another setup", async () => {
    const stpm = new Uint8Array(await (await client.get(`/models/${slug}/versions/1/coefficients`)).arrayBuffer());
    const dir = mkdtempSync(join(tmpdir(), "stillpoint-push-"));
    writeFileSync(join(dir, "model.stpm"), stpm);
    const pushed = await stillpoint("push", "--model", join(dir, "model.stpm"), "--slug", slug, "--server", server.baseUrl, "--token", token);
    expect(pushed.stderr).toMatch(/registered .* as api-.* version 3 \(draft\)/);
    expect(pushed.status).toBe(0);
    expect(JSON.parse(pushed.stdout)).toMatchObject({ model: slug, version: 3, state: "draft" });

    const other = decodeModel(stpm);
    other.setup = { ...other.setup, wavelengthNm: 1550 };
    writeFileSync(join(dir, "other.stpm"), encodeModel(other));
    const refused = await stillpoint("push", "--model", join(dir, "other.stpm"), "--slug", slug, "--server", server.baseUrl, "--token", token);
    expect(refused.status).toBe(1);
    expect(refused.stderr).toBe(`stillpoint push: the server refused the model (422 Unprocessable request): The model file was trained for another optical setup than the one of "${slug}".\n`);
  });
});
