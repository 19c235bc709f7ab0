import http from "node:http";
import fc from "fast-check";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { sessionActor } from "@/lib/access/actor";
import { hashPassword } from "@/lib/auth/password";
import { closeDb, db } from "@/lib/db/knex";
import { createToken } from "@/lib/db/tokens";
import { createUser, getUser } from "@/lib/db/users";
import { getCoefficientFile } from "@/lib/db/versions";
import { writeNpy } from "@/lib/formats/npy";
import { writeNpz } from "@/lib/formats/npz";
import { thetaGridNrad } from "@/lib/optics/setup";
import { closeQueueClients } from "@/lib/queue/enqueue";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";
import { actorFor, createTestModel, SMALL_SETUP, SMALL_ZERNIKE } from "../helpers/registry";

/**
 * Hostile input through the whole stack (the production build over HTTP): every JSON body the first property file does
 * not reach (session-only routes, the exact route, submit and cancel), every query and path parameter, uploads that
 * are truncated, oversized, of the wrong kind, NaN-filled or mislabelled, over-long strings and deep JSON. Whatever
 * arrives: a 4xx problem (never a 5xx), and nothing is left in the database by a refused request. Requests come from a
 * person of this file's own, so rows are counted by their owner while other test files write beside it.
 */

let server: AppServer;
let token = "";
let ownerId = 0;
let slug = "";
let session: ReturnType<AppServer["agent"]>;
let adminSession: ReturnType<AppServer["agent"]>;
let counter = 0;

beforeAll(async () => {
  server = await startAppServer();
  const password = "hostile-input-password";
  const email = `hostile-${process.pid}-${Date.now().toString(36)}@velora.test`;
  ownerId = await createUser({ email, name: "Hostile input", passwordHash: await hashPassword(password), roles: ["viewer", "modeller", "reviewer"] });
  const owner = sessionActor((await getUser(ownerId))!);
  token = (await createToken(owner, { name: "hostile", scopes: ["read", "evaluate", "train"], expiresAt: null, models: null })).token;
  slug = await createTestModel(owner);
  session = server.agent();
  await signIn(session, email, password);
  adminSession = server.agent();
  await signIn(adminSession, "admin@velora.test", "velora-demo-2026");
});

afterAll(async () => {
  await server?.close();
  await closeQueueClients();
  await closeDb();
});

/** What this file's person owns, table by table. */
async function owned(): Promise<Record<string, number>> {
  const count = async (table: string, column: string) => Number((await db()(table).where(column, ownerId).count({ n: "*" }))[0]!.n);
  return {
    setups: await count("setups", "created_by"),
    models: await count("models", "created_by"),
    versions: await count("model_versions", "created_by"),
    runs: await count("runs", "created_by"),
    generatingSets: await count("generating_sets", "created_by"),
    tokens: await count("api_tokens", "user_id"),
  };
}

function expectProblem(status: number, contentType: string | null, body: string, what: string) {
  expect(status, `${what}: ${body.slice(0, 200)}`).toBeGreaterThanOrEqual(400);
  expect(status, `${what}: ${body.slice(0, 200)}`).toBeLessThan(500);
  expect(contentType, what).toContain("application/problem+json");
  const problem = JSON.parse(body) as { status: number; title: string; detail?: string };
  expect(problem.status).toBe(status);
  expect(problem.title.length).toBeGreaterThan(0);
  // A problem quotes what was sent at most in part: an over-long string never comes back whole.
  expect(body.length).toBeLessThan(20_000);
}

const deepJson = (depth: number) => `${'{"a":'.repeat(depth)}1${"}".repeat(depth)}`;
const hostileText = fc.oneof(
  fc.jsonValue({ maxDepth: 5 }).map((v) => JSON.stringify(v)),
  fc.string({ maxLength: 300 }),
  fc.constantFrom("", "null", "[]", "{", '{"decision":', deepJson(5000), `[${"[".repeat(4000)}${"]".repeat(4000)}]`, JSON.stringify({ reason: "x".repeat(200_000), comment: "y".repeat(200_000), name: "z".repeat(200_000) })),
  fc.record(
    {
      decision: fc.oneof(fc.constantFrom("approve", "return"), fc.string()),
      comment: fc.oneof(fc.string({ maxLength: 50 }), fc.constant("c".repeat(100_000)), fc.integer()),
      reason: fc.oneof(fc.string(), fc.constant("r".repeat(100_000))),
      sunsetAt: fc.oneof(fc.date({ noInvalidDate: true }).map((d) => d.toISOString()), fc.string(), fc.double()),
      successorVersion: fc.oneof(fc.integer(), fc.double(), fc.constant(null), fc.string()),
      wavefront: fc.jsonValue({ maxDepth: 3 }),
      name: fc.oneof(fc.string({ maxLength: 400 }), fc.integer()),
      scopes: fc.jsonValue({ maxDepth: 2 }),
      expiresAt: fc.oneof(fc.string(), fc.constant(null), fc.double()),
      models: fc.jsonValue({ maxDepth: 2 }),
    },
    { requiredKeys: [] },
  ).map((v) => JSON.stringify(v)),
);

describe("JSON bodies of the session-only and remaining routes", () => {
  // The versions these reach do not exist or are not in a state the route accepts, so no valid body can change
  // anything either; version 1 of this file's model is never created.
  const routes: [string, "session" | "admin" | "token", () => string][] = [
    ["POST review (reviewer session)", "session", () => `/api/v1/models/${slug}/versions/1/review`],
    ["POST retire (admin session)", "admin", () => `/api/v1/models/${slug}/versions/1/retire`],
    ["POST tokens (session)", "session", () => "/api/v1/tokens"],
    ["POST exact (token)", "token", () => "/api/v1/models/velora-transmit/versions/2/exact"],
    ["POST submit (token)", "token", () => `/api/v1/models/${slug}/versions/1/submit`],
    ["POST cancel (token)", "token", () => "/api/v1/runs/999999999/cancel"],
  ];
  it.each(routes)("%s: a 4xx problem for every hostile body, nothing stored", async (name, who, path) => {
    const before = await owned();
    await fc.assert(
      fc.asyncProperty(hostileText, async (text) => {
        let status: number;
        let contentType: string | null;
        let body: string;
        if (who === "token") {
          const response = await fetch(`${server.baseUrl}${path()}`, { method: "POST", headers: { authorization: `Bearer ${token}`, "content-type": "application/json" }, body: text });
          status = response.status;
          contentType = response.headers.get("content-type");
          body = await response.text();
        } else {
          const agent = who === "admin" ? adminSession : session;
          const response = await agent.post(path()).set("content-type", "application/json").send(text).buffer(true).parse((res, cb) => {
            let data = "";
            res.on("data", (c: Buffer) => (data += c.toString()));
            res.on("end", () => cb(null, data));
          });
          status = response.status;
          contentType = response.headers["content-type"] ?? null;
          body = response.body as string;
        }
        if (name.startsWith("POST tokens") && status === 201) return; // a valid token request is allowed to succeed
        if (name.startsWith("POST exact") && status === 200) return; // so is a valid wavefront
        expectProblem(status, contentType, body, `${name} <- ${text.slice(0, 80)}`);
      }),
      { numRuns: 60 },
    );
    const after = await owned();
    // Only tokens may have been created (by valid token bodies); nothing else.
    expect({ ...after, tokens: 0 }).toEqual({ ...before, tokens: 0 });
  }, 180_000);
});

describe("queries and path parameters", () => {
  const queryValue = fc.oneof(fc.string({ maxLength: 100 }), fc.integer().map(String), fc.double().map(String), fc.constantFrom("-1", "0", "501", "1e309", "NaN", "%00", "'; DROP TABLE models; --", "x".repeat(10_000), "[]", "{}"));
  const cases: [string, (v: string) => string][] = [
    ["GET /models?q", (v) => `/api/v1/models?q=${encodeURIComponent(v)}`],
    ["GET /models?state", (v) => `/api/v1/models?state=${encodeURIComponent(v)}`],
    ["GET /models?setupId", (v) => `/api/v1/models?setupId=${encodeURIComponent(v)}`],
    ["GET /models?limit&cursor", (v) => `/api/v1/models?limit=${encodeURIComponent(v)}&cursor=${encodeURIComponent(v)}`],
    ["GET /setups?limit&cursor", (v) => `/api/v1/setups?limit=${encodeURIComponent(v)}&cursor=${encodeURIComponent(v)}`],
    ["GET /runs?model", (v) => `/api/v1/runs?model=${encodeURIComponent(v)}`],
    ["GET /runs/{id}", (v) => `/api/v1/runs/${encodeURIComponent(v)}`],
    ["GET /models/{slug}", (v) => `/api/v1/models/${encodeURIComponent(v)}`],
    ["GET /models/{slug}/versions/{version}", (v) => `/api/v1/models/velora-transmit/versions/${encodeURIComponent(v)}`],
    ["GET coefficients?format", (v) => `/api/v1/models/velora-transmit/versions/2/coefficients?format=${encodeURIComponent(v)}`],
    ["DELETE /tokens/{id}", (v) => `/api/v1/tokens/${encodeURIComponent(v)}`],
  ];
  it.each(cases)("%s: never a 5xx; refusals are problems", async (name, url) => {
    await fc.assert(
      fc.asyncProperty(queryValue, async (value) => {
        const method = name.startsWith("DELETE") ? "DELETE" : "GET";
        const response = await fetch(`${server.baseUrl}${url(value)}`, { method, headers: { authorization: `Bearer ${token}` } });
        const body = await response.text();
        if (response.status < 400) return;
        // Refused by the HTTP layer before any route runs: an empty id is the collection (405, no DELETE there), and
        // an address over Node's 16 KB header limit is 431. Clear 4xx answers, without a problem document.
        if ([405, 414, 431].includes(response.status)) return;
        expectProblem(response.status, response.headers.get("content-type"), body, `${name} <- ${value.slice(0, 60)}`);
      }),
      { numRuns: 40 },
    );
  }, 120_000);

  it("GET /tokens?all by a session that is not an admin is refused, not widened", async () => {
    for (const value of ["true", "1", "yes", "TRUE", "x".repeat(5000)]) {
      const response = await session.get(`/api/v1/tokens?all=${encodeURIComponent(value)}`);
      expect(response.status).toBeLessThan(500);
      if (response.status === 200) expect((response.body.items as { owner: string }[]).every((t) => t.owner.startsWith("hostile-"))).toBe(true);
    }
  });
});

describe("uploads", () => {
  const M = SMALL_SETUP.farField.pointsPerAxis;
  const J = SMALL_ZERNIKE.indices.length;
  const S = 20;
  const members = (x: Float64Array, extra: Record<string, Uint8Array> = {}) => ({
    noll_indices: writeNpy("<i4", [J], SMALL_ZERNIKE.indices),
    theta_nrad: writeNpy("<f8", [M], thetaGridNrad(SMALL_SETUP.farField)),
    coefficients_nm: writeNpy("<f8", [S, J], new Float64Array(S * J).map((_, i) => ((i * 7) % 11) - 5)),
    ttl_x_pm_per_nrad: writeNpy("<f8", [S, M, M], x),
    ttl_y_pm_per_nrad: writeNpy("<f8", [S, M, M], x),
    ...extra,
  });
  const zeros = new Float64Array(S * M * M);
  const good = writeNpz(members(zeros));
  const nan = new Float64Array(S * M * M).fill(Number.NaN);

  async function upload(bytes: Uint8Array, fileName: string, type = "application/octet-stream") {
    const form = new FormData();
    form.set("file", new Blob([bytes as BlobPart], { type }), fileName);
    const response = await fetch(`${server.baseUrl}/api/v1/models/${slug}/generating-sets`, { method: "POST", headers: { authorization: `Bearer ${token}` }, body: form });
    return { status: response.status, contentType: response.headers.get("content-type"), body: await response.text() };
  }

  const cases: [string, () => Promise<{ status: number; contentType: string | null; body: string }>, number][] = [
    ["truncated", () => upload(good.subarray(0, Math.floor(good.length / 3)), "set.npz"), 422],
    ["of the wrong kind (a PNG named .npz)", () => upload(new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 13]), "set.npz", "image/png"), 422],
    ["NaN-filled", () => upload(writeNpz(members(nan)), "set.npz"), 422],
    ["mislabelled (the maps under each other's names and a wrong dtype)", () => upload(writeNpz(members(zeros, { noll_indices: writeNpy("<f8", [J], SMALL_ZERNIKE.indices) })), "set.npz"), 422],
    ["members renamed", () => upload(writeNpz({ coefficients: writeNpy("<f8", [S, J], new Float64Array(S * J)) }), "set.npz"), 422],
    ["an empty file", () => upload(new Uint8Array(), "set.npz"), 422],
    [
      "not multipart at all",
      async () => {
        const response = await fetch(`${server.baseUrl}/api/v1/models/${slug}/generating-sets`, { method: "POST", headers: { authorization: `Bearer ${token}`, "content-type": "application/json" }, body: "{}" });
        return { status: response.status, contentType: response.headers.get("content-type"), body: await response.text() };
      },
      400,
    ],
    [
      "a form without the file field",
      async () => {
        const form = new FormData();
        form.set("other", "x".repeat(100_000));
        const response = await fetch(`${server.baseUrl}/api/v1/models/${slug}/generating-sets`, { method: "POST", headers: { authorization: `Bearer ${token}` }, body: form });
        return { status: response.status, contentType: response.headers.get("content-type"), body: await response.text() };
      },
      422,
    ],
    [
      "oversized (a declared length over the limit is refused before the body is read)",
      () =>
        new Promise((resolve, reject) => {
          const url = new URL(`${server.baseUrl}/api/v1/models/${slug}/generating-sets`);
          const request = http.request(
            { host: url.hostname, port: url.port, path: url.pathname, method: "POST", headers: { authorization: `Bearer ${token}`, "content-type": "multipart/form-data; boundary=x", "content-length": String(300 * 1024 * 1024) } },
            (response) => {
              let body = "";
              response.on("data", (c: Buffer) => (body += c.toString()));
              response.on("end", () => {
                request.destroy();
                resolve({ status: response.statusCode ?? 0, contentType: String(response.headers["content-type"] ?? ""), body });
              });
            },
          );
          request.on("error", reject);
          request.write("--x\r\n");
          // The rest of the 300 MB never comes; the answer must not wait for it.
        }),
      413,
    ],
  ];
  it.each(cases)("%s: a clear 4xx and no set stored", async (_name, send, status) => {
    const before = await owned();
    const answer = await send();
    expect(answer.status, answer.body).toBe(status);
    expectProblem(answer.status, answer.contentType, answer.body, _name);
    expect((JSON.parse(answer.body) as { detail: string }).detail.length).toBeGreaterThan(10);
    expect(await owned()).toEqual(before);
  });

  it("the same good file is stored (so the refusals above are about the files)", async () => {
    const before = await owned();
    const answer = await upload(good, "set.npz");
    expect(answer.status, answer.body).toBe(201);
    expect((await owned()).generatingSets).toBe(before.generatingSets + 1);
  });

  it("coefficient-file uploads: random, truncated and bit-flipped .stpm bytes are refused and store no version", async () => {
    const demo = (await getCoefficientFile(await actorFor("modeller@velora.test"), "velora-transmit", 2)).bytes;
    const before = await owned();
    const variants = fc.oneof(
      fc.uint8Array({ maxLength: 2000 }),
      fc.integer({ min: 0, max: demo.length - 1 }).map((n) => demo.subarray(0, n)),
      fc.integer({ min: 0, max: demo.length - 1 }).map((i) => {
        const copy = Uint8Array.from(demo);
        copy[i] ^= 0x40;
        return copy;
      }),
    );
    await fc.assert(
      fc.asyncProperty(variants, async (bytes) => {
        counter++;
        const response = await fetch(`${server.baseUrl}/api/v1/models/${slug}/versions/upload`, { method: "POST", headers: { authorization: `Bearer ${token}`, "content-type": "application/octet-stream" }, body: bytes as BodyInit });
        expectProblem(response.status, response.headers.get("content-type"), await response.text(), `upload of ${bytes.length} bytes`);
      }),
      { numRuns: 40 },
    );
    expect(await owned()).toEqual(before);
  }, 120_000);
});
