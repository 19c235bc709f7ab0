import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/lib/db/knex";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";

// server/app-server.ts answers token-carrying evaluate requests through the route handler directly and everything
// else through Next.js. Both paths must give the same answers, the same problems and see a revocation at once.

type Agent = ReturnType<AppServer["agent"]>;
let server: AppServer;
let viewer: Agent;
let token: string;
let tokenId: number;

const evaluatePath = "/api/v1/models/velora-transmit/versions/2/evaluate";
const body = {
  wavefronts: [{ ordering: "noll", coefficientsNm: { "4": 3.2, "6": -1.5, "11": 2 } }],
  output: "offsets",
  offsetsNrad: [[-12.5, 30]],
  jitterNrad: 8,
};

const withToken = (path: string, init: RequestInit & { token?: string } = {}) =>
  fetch(`${server.baseUrl}${path}`, {
    ...init,
    headers: { authorization: `Bearer ${init.token ?? token}`, "content-type": "application/json", ...(init.headers ?? {}) },
  });

beforeAll(async () => {
  server = await startAppServer();
  viewer = server.agent();
  await signIn(viewer, "viewer@velora.test", DEMO_PASSWORD);
  const created = await viewer.post("/api/v1/tokens").send({ name: "direct path", scopes: ["evaluate"], expiresAt: null, models: null }).expect(201);
  token = created.body.token;
  tokenId = created.body.id;
});

afterAll(async () => {
  await server?.close();
  await closeDb();
});

describe("the direct evaluate path", () => {
  it("answers a token exactly as the framework answers the same evaluation for a session", async () => {
    const direct = await withToken(evaluatePath, { method: "POST", body: JSON.stringify(body) });
    expect(direct.status).toBe(200);
    // The security headers of the framework's API answers, the same on both paths.
    for (const name of ["x-content-type-options", "referrer-policy", "x-frame-options", "content-security-policy", "permissions-policy"]) {
      expect(direct.headers.get(name), name).toBeTruthy();
    }
    expect(direct.headers.get("content-type")).toBe("application/json");
    const throughNext = await viewer.post(evaluatePath).send(body).expect(200);
    for (const name of ["x-content-type-options", "referrer-policy", "x-frame-options", "content-security-policy", "permissions-policy"]) {
      expect(direct.headers.get(name), name).toBe(throughNext.headers[name]);
    }
    expect(await direct.json()).toEqual(throughNext.body);
  });

  it("streams a batch answer whole", async () => {
    const batch = { wavefronts: Array.from({ length: 300 }, (_, i) => ({ ordering: "noll", coefficientsNm: { "4": (i % 7) - 3 } })), output: "summary" };
    const direct = await withToken(evaluatePath, { method: "POST", body: JSON.stringify(batch) });
    expect(direct.status).toBe(200);
    const answer = await direct.json();
    expect(answer.results).toHaveLength(300);
    expect(answer.notice).toMatch(/engineering estimates/);
  });

  it("maps bad requests to the same problem details", async () => {
    const malformed = await withToken(evaluatePath, { method: "POST", body: "{not json" });
    expect(malformed.status).toBe(400);
    expect(malformed.headers.get("content-type")).toBe("application/problem+json");

    const invalid = await withToken(evaluatePath, { method: "POST", body: JSON.stringify({ wavefronts: [{ ordering: "noll", coefficientsNm: { "4": "x" } }] }) });
    expect(invalid.status).toBe(422);
    const problem = await invalid.json();
    expect(problem.issues[0].path).toBe("wavefronts.0");
    expect(problem.issues[0].message).toBe("coefficient of Noll term 4 must be a finite number");

    const unknown = await withToken(evaluatePath, { method: "POST", body: JSON.stringify(body), token: `stp_${"B".repeat(43)}` });
    expect(unknown.status).toBe(401);
    expect(unknown.headers.get("www-authenticate")).toMatch(/^Bearer/);

    const draft = await withToken("/api/v1/models/velora-transmit/versions/4/evaluate", { method: "POST", body: JSON.stringify(body) });
    expect(draft.status).toBe(403);
    const missing = await withToken("/api/v1/models/no-such-model/versions/1/evaluate", { method: "POST", body: JSON.stringify(body) });
    expect(missing.status).toBe(404);
  });

  it("leaves other methods and routes to the framework", async () => {
    const get = await withToken(evaluatePath, { method: "GET" });
    expect(get.status).toBe(405);
    const models = await withToken("/api/v1/models");
    // The token has no read scope: the framework's route handler refuses it.
    expect(models.status).toBe(403);
  });

  it("refuses a token from the request after its revocation through the framework", async () => {
    // Two checks in a row fill the token cache the direct path uses.
    expect((await withToken(evaluatePath, { method: "POST", body: JSON.stringify(body) })).status).toBe(200);
    expect((await withToken(evaluatePath, { method: "POST", body: JSON.stringify(body) })).status).toBe(200);
    await viewer.delete(`/api/v1/tokens/${tokenId}`).expect(204);
    const after = await withToken(evaluatePath, { method: "POST", body: JSON.stringify(body) });
    expect(after.status).toBe(401);
    expect((await after.json()).detail).toBe("The token has been revoked.");
  });
});
