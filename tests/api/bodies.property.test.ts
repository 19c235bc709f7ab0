import fc from "fast-check";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { POST as evaluate } from "@/app/api/v1/models/[slug]/versions/[version]/evaluate/route";
import { POST as train } from "@/app/api/v1/models/[slug]/versions/route";
import { POST as createModel } from "@/app/api/v1/models/route";
import { POST as checkSetup } from "@/app/api/v1/setups/check/route";
import { POST as createSetup } from "@/app/api/v1/setups/route";
import { POST as createTokenRoute } from "@/app/api/v1/tokens/route";
import { closeDb } from "@/lib/db/knex";
import { createToken } from "@/lib/db/tokens";
import { closeQueueClients } from "@/lib/queue/enqueue";
import { actorFor } from "../helpers/registry";
import { testDatabaseName } from "../helpers/test-database";

testDatabaseName();

/**
 * Hostile and malformed bodies on every JSON route of the registry and the evaluate API: whatever arrives, the answer is
 * never a 5xx, always problem details, and a 422 names the fields at fault.
 */
let token = "";
beforeAll(async () => {
  const modeller = await actorFor("modeller@velora.test");
  token = (await createToken(modeller, { name: "properties", scopes: ["read", "evaluate", "train"], expiresAt: null, models: null })).token;
});
afterAll(async () => {
  await closeQueueClients();
  await closeDb();
});

type Handler = (request: Request, context: { params: Promise<Record<string, string>> }) => Promise<Response>;
const ROUTES: [string, Handler, Record<string, string>][] = [
  ["POST /setups/check", checkSetup as Handler, {}],
  ["POST /setups", createSetup as Handler, {}],
  ["POST /models", createModel as Handler, {}],
  ["POST /models/{slug}/versions", train as Handler, { slug: "velora-transmit" }],
  ["POST /models/{slug}/versions/{v}/evaluate", evaluate as Handler, { slug: "velora-transmit", version: "2" }],
];

/** Valid-looking bodies with fields of the wrong type, out of range or missing, and arbitrary JSON. */
const wavefront = fc.record({
  ordering: fc.oneof(fc.constantFrom("noll", "ansi"), fc.string()),
  coefficientsNm: fc.oneof(
    fc.dictionary(fc.oneof(fc.integer({ min: -3, max: 400 }).map(String), fc.string()), fc.oneof(fc.double(), fc.string(), fc.constant(null))),
    fc.jsonValue(),
  ),
});
const bodies = fc.oneof(
  fc.jsonValue({ maxDepth: 4 }),
  fc.record({ wavefronts: fc.array(wavefront, { maxLength: 3 }), output: fc.oneof(fc.constantFrom("map", "offsets", "summary"), fc.string()), offsetsNrad: fc.jsonValue(), jitterNrad: fc.oneof(fc.double(), fc.string()), strict: fc.jsonValue() }, { requiredKeys: [] }),
  fc.record({ name: fc.oneof(fc.string({ maxLength: 300 }), fc.integer()), setup: fc.jsonValue(), slug: fc.string(), setupId: fc.oneof(fc.integer(), fc.double()), zernike: fc.jsonValue() }, { requiredKeys: [] }),
  fc.record({ order: fc.oneof(fc.integer({ min: -2, max: 4 }), fc.string()), generatingSet: fc.record({ design: fc.oneof(fc.constantFrom("random", "axes-and-pairs", "uploaded"), fc.string()), size: fc.oneof(fc.integer(), fc.double()), maxRmsNm: fc.double(), seed: fc.oneof(fc.integer(), fc.double()), stepNm: fc.double(), generatingSetId: fc.integer() }, { requiredKeys: [] }), validationSet: fc.jsonValue() }, { requiredKeys: [] }),
);
const texts = fc.oneof(bodies.map((b) => JSON.stringify(b)), fc.string({ maxLength: 200 }), fc.constant(""), fc.constant("{".repeat(5000)), fc.constant(`{"a":${"[".repeat(3000)}${"]".repeat(3000)}}`));

describe("every JSON body", () => {
  it.each(ROUTES)("%s answers problem details, never a 5xx", async (_name, handler, params) => {
    await fc.assert(
      fc.asyncProperty(texts, async (text) => {
        const response = await handler(
          new Request("http://localhost/api/v1/x", { method: "POST", headers: { authorization: `Bearer ${token}`, "content-type": "application/json" }, body: text }),
          { params: Promise.resolve(params) },
        );
        expect(response.status).toBeLessThan(500);
        if (response.status >= 400) {
          expect(response.headers.get("content-type")).toBe("application/problem+json");
          const problem = await response.json();
          expect(problem.status).toBe(response.status);
          expect(typeof problem.title).toBe("string");
          if (response.status === 422 && problem.issues) {
            expect(problem.issues.length).toBeGreaterThan(0);
            for (const issue of problem.issues) {
              expect(typeof issue.path).toBe("string");
              expect(issue.message.length).toBeGreaterThan(0);
            }
          }
        } else {
          await response.arrayBuffer();
        }
      }),
      { numRuns: 150 },
    );
  });

  it("POST /tokens refuses tokens outright, whatever the body", async () => {
    await fc.assert(
      fc.asyncProperty(texts, async (text) => {
        const response = await (createTokenRoute as Handler)(
          new Request("http://localhost/api/v1/tokens", { method: "POST", headers: { authorization: `Bearer ${token}`, "content-type": "application/json" }, body: text }),
          { params: Promise.resolve({}) },
        );
        expect([400, 403, 413, 422]).toContain(response.status);
        expect(response.headers.get("content-type")).toBe("application/problem+json");
      }),
      { numRuns: 50 },
    );
  });
});
