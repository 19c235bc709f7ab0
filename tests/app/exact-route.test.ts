import referenceJson from "../fixtures/optics/demo-setup-ttl.json" with { type: "json" };
import type { ExactComparison } from "@/lib/registry/exact";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/lib/db/knex";
import { createToken } from "@/lib/db/tokens";
import { VELORA_SETUP } from "@/lib/demo/velora";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";
import { actorFor } from "../helpers/registry";

// POST /api/v1/models/{slug}/versions/{v}/exact against the production build and the seeded demo model: the exact maps
// come from the server's compute pool, and are checked against the independent NumPy reference of the demo setup.

interface Reference {
  setup: typeof VELORA_SETUP;
  cases: {
    wfe: { ordering: "noll" | "ansi"; coefficientsNm: Record<string, number> };
    peakAbsTtlPmPerNrad: number;
    nodes: { ix: number; iy: number; ttlXPmPerNrad: number; ttlYPmPerNrad: number }[];
  }[];
}
const reference = referenceJson as unknown as Reference;

/** The route's answer: the comparison of lib/registry/exact.ts, without the headers it sends separately. */
type ExactAnswer = Omit<ExactComparison, "headers">;

let server: AppServer;
let evaluateToken = "";
let readToken = "";
const released = "/api/v1/models/velora-transmit/versions/2";

beforeAll(async () => {
  server = await startAppServer();
  const modeller = await actorFor("modeller@velora.test");
  evaluateToken = (await createToken(modeller, { name: `exact-evaluate-${process.pid}`, scopes: ["evaluate"], expiresAt: null, models: null })).token;
  readToken = (await createToken(modeller, { name: `exact-read-${process.pid}`, scopes: ["read"], expiresAt: null, models: null })).token;
});

afterAll(async () => {
  await server?.close();
  await closeDb();
});

async function post(path: string, body: unknown, token: string | null = evaluateToken): Promise<{ status: number; body: Record<string, unknown>; type: string }> {
  const response = await fetch(`${server.baseUrl}${path}`, {
    method: "POST",
    headers: { "content-type": "application/json", ...(token ? { authorization: `Bearer ${token}` } : {}) },
    body: typeof body === "string" ? body : JSON.stringify(body),
  });
  return { status: response.status, body: (await response.json()) as Record<string, unknown>, type: response.headers.get("content-type") ?? "" };
}

describe("POST .../versions/{v}/exact", () => {
  it("propagates on the demo setup as the independent NumPy reference does, within 1 % of the peak", async () => {
    // The fixture's own statement: a 1024^2-sample NumPy evaluation of PHYSICS.md's sums agrees with 128^2 samples
    // to better than 1 % of each map's peak |TTL|. The seeded model uses that very setup.
    expect(reference.setup).toEqual(VELORA_SETUP);
    for (const c of reference.cases) {
      const answer = await post(`${released}/exact`, { wavefront: c.wfe });
      expect(answer.status).toBe(200);
      const exact = answer.body as unknown as ExactAnswer;
      expect(exact.exact.ttlXPmPerNrad).toHaveLength(VELORA_SETUP.farField.pointsPerAxis);
      for (const node of c.nodes) {
        expect(Math.abs((exact.exact.ttlXPmPerNrad[node.iy][node.ix] as number) - node.ttlXPmPerNrad)).toBeLessThan(0.01 * c.peakAbsTtlPmPerNrad);
        expect(Math.abs((exact.exact.ttlYPmPerNrad[node.iy][node.ix] as number) - node.ttlYPmPerNrad)).toBeLessThan(0.01 * c.peakAbsTtlPmPerNrad);
      }
      expect(Math.abs(exact.exact.peakAbsTtlPmPerNrad - c.peakAbsTtlPmPerNrad)).toBeLessThan(0.01 * c.peakAbsTtlPmPerNrad);
    }
  });

  it("answers the evaluate route's surrogate maps beside the exact ones, their difference, the version and the notice", async () => {
    const wavefront = reference.cases[1].wfe;
    const answer = await post(`${released}/exact`, { wavefront });
    expect(answer.status).toBe(200);
    expect(answer.type).toContain("application/json");
    const exact = answer.body as unknown as ExactAnswer;
    const evaluated = await post(`${released}/evaluate`, { wavefronts: [wavefront], output: "map" });
    expect(evaluated.status).toBe(200);
    const result = (evaluated.body.results as { ttlXPmPerNrad: number[][]; ttlYPmPerNrad: number[][] }[])[0];
    expect({ model: exact.model, version: exact.version, state: exact.state, sha: exact.coefficientsSha256, theta: exact.thetaNrad }).toEqual({
      model: "velora-transmit", version: 2, state: "released", sha: evaluated.body.coefficientsSha256, theta: evaluated.body.thetaNrad,
    });
    expect(exact.surrogate.ttlXPmPerNrad).toEqual(result.ttlXPmPerNrad);
    expect(exact.surrogate.ttlYPmPerNrad).toEqual(result.ttlYPmPerNrad);
    // The difference is surrogate minus exact at every node (no far-field null on this map), its largest |value| named.
    let worst = 0;
    for (const [axis, surrogate, exactMap, difference] of [
      ["x", exact.surrogate.ttlXPmPerNrad, exact.exact.ttlXPmPerNrad, exact.differencePmPerNrad.x],
      ["y", exact.surrogate.ttlYPmPerNrad, exact.exact.ttlYPmPerNrad, exact.differencePmPerNrad.y],
    ] as const) {
      surrogate.forEach((row, iy) =>
        row.forEach((value, ix) => {
          const d = value - (exactMap[iy][ix] as number);
          expect(difference[iy][ix]).toBe(d);
          if (Math.abs(d) > worst) worst = Math.abs(d);
          void axis;
        }),
      );
    }
    expect(exact.maxAbsDifferencePmPerNrad).toBe(worst);
    expect(exact.validity).toEqual({ inRange: true, warnings: [] });
    expect(exact.notice).toBe(SURROGATE_NOTICE);
  });

  it("gives a wavefront in ANSI indices the same answer as its Noll twin", async () => {
    // Cases 2 and 3 of the reference are one wavefront written in the two orderings (the fixture says so).
    const noll = (await post(`${released}/exact`, { wavefront: reference.cases[1].wfe })).body as unknown as ExactAnswer;
    const ansi = (await post(`${released}/exact`, { wavefront: reference.cases[2].wfe })).body as unknown as ExactAnswer;
    expect(ansi.exact).toEqual(noll.exact);
    expect(ansi.differencePmPerNrad).toEqual(noll.differencePmPerNrad);
  });

  it("refuses callers as evaluate does: no credentials 401, no evaluate scope 403, a viewer on a draft 403", async () => {
    const body = { wavefront: { ordering: "noll", coefficientsNm: { "4": 1 } } };
    const anonymous = await post(`${released}/exact`, body, null);
    expect(anonymous.status).toBe(401);
    expect(anonymous.type).toContain("application/problem+json");
    const readOnly = await post(`${released}/exact`, body, readToken);
    expect(readOnly.status).toBe(403);
    expect(readOnly.body.detail).toBe('This token lacks the "evaluate" scope.');
    const draftByToken = await post("/api/v1/models/velora-transmit/versions/4/exact", body);
    expect(draftByToken.status).toBe(403);

    const viewer = server.agent();
    await signIn(viewer, "viewer@velora.test", DEMO_PASSWORD);
    const draft = await viewer.post("/api/v1/models/velora-transmit/versions/4/exact").send(body);
    expect(draft.status).toBe(403);
    expect(JSON.stringify(draft.body)).not.toMatch(/ttlXPmPerNrad|coefficientsSha256/);
    const modeller = server.agent();
    await signIn(modeller, "modeller@velora.test", DEMO_PASSWORD);
    const own = await modeller.post("/api/v1/models/velora-transmit/versions/4/exact").send(body);
    expect(own.status).toBe(200);
    expect(own.body.state).toBe("draft");
  });

  it("answers problem details naming the field for a bad body, 404 for an unknown version, 400 for broken JSON", async () => {
    // Noll 40 is outside the demo model's set (Noll 4-36).
    const outside = await post(`${released}/exact`, { wavefront: { ordering: "noll", coefficientsNm: { "40": 1 } } });
    expect(outside.status).toBe(422);
    expect(outside.body.issues).toEqual([{ path: "wavefront.coefficientsNm", message: "Noll term 40 is not in this model's Zernike set" }]);
    const missing = await post(`${released}/exact`, { wavefronts: [] });
    expect(missing.status).toBe(422);
    expect((missing.body.issues as { path: string }[]).map((i) => i.path)).toContain("wavefront");
    const unknown = await post("/api/v1/models/velora-transmit/versions/99/exact", { wavefront: { ordering: "noll", coefficientsNm: {} } });
    expect(unknown.status).toBe(404);
    const broken = await post(`${released}/exact`, "{ not json");
    expect(broken.status).toBe(400);
  });
});
