import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";

// A server whose tokens may make 5 evaluation points a minute: the sixth single evaluation is refused with 429,
// problem details and Retry-After, and a session (the browser) is not limited by it.
vi.hoisted(() => {
  process.env.RATE_LIMIT_PER_MINUTE = "5";
});

const { closeDb } = await import("@/lib/db/knex");
const { DEMO_PASSWORD } = await import("@/seeds/01_demo_accounts");
const { signIn, startAppServer } = await import("../helpers/app-server");

let server: Awaited<ReturnType<typeof startAppServer>>;
let viewer: ReturnType<typeof server.agent>;
let token: string;
const path = "/api/v1/models/velora-transmit/versions/2/evaluate";
const body = JSON.stringify({ wavefronts: [{ ordering: "noll", coefficientsNm: { "4": 2 } }], output: "summary" });

beforeAll(async () => {
  server = await startAppServer();
  viewer = server.agent();
  await signIn(viewer, "viewer@velora.test", DEMO_PASSWORD);
  token = (await viewer.post("/api/v1/tokens").send({ name: "limited", scopes: ["evaluate"], expiresAt: null, models: null }).expect(201)).body.token;
});

afterAll(async () => {
  await server?.close();
  await closeDb();
});

describe("per-token rate limit over HTTP", () => {
  it("refuses the evaluation past the limit with 429 and Retry-After", async () => {
    const statuses: number[] = [];
    let refusal: Response | null = null;
    for (let i = 0; i < 6; i++) {
      const response = await fetch(`${server.baseUrl}${path}`, { method: "POST", headers: { authorization: `Bearer ${token}`, "content-type": "application/json" }, body });
      statuses.push(response.status);
      if (response.status === 429) refusal = response;
      else await response.arrayBuffer();
    }
    expect(statuses).toEqual([200, 200, 200, 200, 200, 429]);
    expect(refusal!.headers.get("content-type")).toBe("application/problem+json");
    const wait = Number(refusal!.headers.get("retry-after"));
    expect(wait).toBeGreaterThanOrEqual(1);
    expect(wait).toBeLessThanOrEqual(60);
    expect((await refusal!.json()).detail).toMatch(/5 evaluation points a minute/);
  });

  it("does not limit the browser's session", async () => {
    for (let i = 0; i < 7; i++) await viewer.post(path).set("content-type", "application/json").send(body).expect(200);
  });
});
