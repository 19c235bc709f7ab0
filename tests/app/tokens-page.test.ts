import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb, db } from "@/lib/db/knex";
import { createToken } from "@/lib/db/tokens";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";
import { actorFor } from "../helpers/registry";
import { actionId, callAction } from "../helpers/server-actions";

// The tokens page's actions through the production build, called with their ids and any arguments as anyone can
// (a server action is a public POST endpoint), and the page each role sees.

type Agent = ReturnType<AppServer["agent"]>;
let server: AppServer;
const agents = new Map<string, Agent>();
const tag = `${process.pid}-${Date.now().toString(36)}`;
const ACTIONS = "app/(workspace)/tokens/actions.ts";

beforeAll(async () => {
  server = await startAppServer();
  for (const role of ["viewer", "modeller", "reviewer"]) {
    const agent = server.agent();
    await signIn(agent, `${role}@velora.test`, DEMO_PASSWORD);
    agents.set(role, agent);
  }
});

afterAll(async () => {
  await server?.close();
  await closeDb();
});

const revokedAt = async (id: number) => ((await db()("api_tokens").where({ id }).first()) as { revoked_at: Date | null }).revoked_at;

describe("the tokens page's server actions called directly", () => {
  it("revokeTokenAction: a signed-out caller meets the sign-in redirect and the token stays active", async () => {
    const { id } = await createToken(await actorFor("modeller@velora.test"), { name: `signed-out-${tag}`, scopes: ["read"], expiresAt: null, models: null });
    const answer = await callAction(server.agent(), "/tokens", actionId(ACTIONS, "revokeTokenAction"), [id]);
    expect(answer.status).toBe(307);
    expect(new URL(answer.location!, server.baseUrl).pathname).toBe("/sign-in");
    expect(await revokedAt(id)).toBeNull();
  });

  it("revokeTokenAction: another person's token is not found for a viewer; the owner revokes it", async () => {
    const { id } = await createToken(await actorFor("modeller@velora.test"), { name: `others-${tag}`, scopes: ["read"], expiresAt: null, models: null });
    const asViewer = await callAction(agents.get("viewer")!, "/tokens", actionId(ACTIONS, "revokeTokenAction"), [id]);
    expect(asViewer.status).toBe(200);
    expect(asViewer.text).toContain(`There is no token ${id}.`);
    expect(await revokedAt(id)).toBeNull();
    const asOwner = await callAction(agents.get("modeller")!, "/tokens", actionId(ACTIONS, "revokeTokenAction"), [id]);
    expect(asOwner.text).toContain('"ok":true');
    expect(await revokedAt(id)).not.toBeNull();
  });

  it("createTokenAction: a reviewer may not give a token the train scope; a signed-out caller is redirected", async () => {
    const name = `reviewer-train-${tag}`;
    const input = { name, scopes: ["evaluate", "train"], expiresAt: null, models: null };
    const asReviewer = await callAction(agents.get("reviewer")!, "/tokens", actionId(ACTIONS, "createTokenAction"), [input]);
    expect(asReviewer.status).toBe(200);
    expect(asReviewer.text).toContain('The \\"train\\" scope needs the modeller role.');
    const signedOut = await callAction(server.agent(), "/tokens", actionId(ACTIONS, "createTokenAction"), [{ ...input, scopes: ["read"] }]);
    expect(signedOut.status).toBe(307);
    expect(await db()("api_tokens").where({ name }).first()).toBeUndefined();
  });
});

describe("the tokens page", () => {
  it("offers the train scope to modellers only", async () => {
    const modeller = await agents.get("modeller")!.get("/tokens").expect(200);
    expect(modeller.text).toMatch(/value="train"/);
    for (const role of ["viewer", "reviewer"]) {
      const page = await agents.get(role)!.get("/tokens").expect(200);
      expect(page.text).toMatch(/value="evaluate"/);
      expect(page.text).not.toMatch(/value="train"/);
    }
  });

  it("lists one's own tokens with uses, creation and revocation, never their secrets or other people's tokens", async () => {
    const modeller = await actorFor("modeller@velora.test");
    const mine = await createToken(modeller, { name: `listed-${tag}`, scopes: ["read"], expiresAt: "2031-06-30T00:00:00Z", models: ["velora-transmit"] });
    const page = await agents.get("modeller")!.get("/tokens").expect(200);
    expect(page.text).toContain(`listed-${tag}`);
    expect(page.text).toContain("2031-06-30 00:00");
    expect(page.text).not.toContain(mine.token);
    const viewerPage = await agents.get("viewer")!.get("/tokens").expect(200);
    expect(viewerPage.text).not.toContain(`listed-${tag}`);
  });
});
