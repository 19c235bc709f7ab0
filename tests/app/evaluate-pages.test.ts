import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/lib/db/knex";
import { openApiDocument } from "@/lib/api/openapi";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";

// The API reference and the playground pages as each reader gets them from the production build.

type Agent = ReturnType<AppServer["agent"]>;
let server: AppServer;
let viewer: Agent;
let modeller: Agent;

beforeAll(async () => {
  server = await startAppServer();
  viewer = server.agent();
  await signIn(viewer, "viewer@velora.test", DEMO_PASSWORD);
  modeller = server.agent();
  await signIn(modeller, "modeller@velora.test", DEMO_PASSWORD);
});

afterAll(async () => {
  await server?.close();
  await closeDb();
});

describe("/api-reference", () => {
  it("shows every operation of the OpenAPI document with who may call it", async () => {
    const page = await viewer.get("/api-reference").expect(200);
    const document = openApiDocument() as { paths: Record<string, Record<string, { description?: string }>> };
    const operations = Object.entries(document.paths).flatMap(([path, methods]) => Object.keys(methods).map((m) => `${m.toUpperCase()} ${path}`));
    expect(operations.length).toBeGreaterThanOrEqual(20);
    const shown = [...page.text.matchAll(/data-operation="([^"]+)"/g)].map((match) => match[1]);
    expect(shown.sort()).toEqual(operations.sort());
    expect(page.text).toContain("Who may call it:");
  });

  it("fills the examples with the latest released version of velora-transmit by default", async () => {
    const page = await viewer.get("/api-reference").expect(200);
    expect(page.text).toContain("/api/v1/models/velora-transmit/versions/2/evaluate");
    expect(page.text).toMatch(/<option value="velora-transmit\/2" selected="">/);
    // A viewer is offered only the versions a viewer may evaluate: released and retired, not the draft or the one in review.
    expect(page.text).toContain('value="velora-transmit/1"');
    expect(page.text).not.toContain('value="velora-transmit/3"');
    expect(page.text).not.toContain('value="velora-transmit/4"');
  });
});

describe("the playground", () => {
  // The workspace streams behind its loading state (loading.tsx): the redirect and the not-found page arrive in the
  // streamed answer, not as a status line.
  it("sends /playground to the released demo version", async () => {
    const answer = await viewer.get("/playground").redirects(0);
    expect(answer.text).toContain("/models/velora-transmit/versions/2/playground");
    expect(answer.text).not.toContain('data-testid="playground-empty"');
  });

  it("says why a viewer cannot evaluate a draft, and lets a modeller do it", async () => {
    const refused = await viewer.get("/models/velora-transmit/versions/4/playground").expect(200);
    expect(refused.text).toContain('data-testid="not-evaluable"');
    expect(refused.text).not.toContain('data-testid="ttl-maps"');
    const allowed = await modeller.get("/models/velora-transmit/versions/4/playground").expect(200);
    expect(allowed.text).toContain('data-testid="ttl-maps"');
    expect(allowed.text).toContain('aria-label="Z36 (nm RMS)"');
  });

  it("answers not found for a version that does not exist", async () => {
    const page = await viewer.get("/models/velora-transmit/versions/99/playground");
    expect(page.text).toContain("There is nothing at this address.");
    expect(page.text).not.toContain('data-testid="ttl-maps"');
  });
});
