import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { hashPassword } from "@/lib/auth/password";
import { closeDb } from "@/lib/db/knex";
import { createUser } from "@/lib/db/users";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";

let server: AppServer;

// A person of this file's own, so renaming cannot disturb the demo accounts other files sign in with.
const OWN_EMAIL = "account-page@velora.test";
const OWN_PASSWORD = "account-page-password";

beforeAll(async () => {
  server = await startAppServer();
  await createUser({ email: OWN_EMAIL, name: "Account page", passwordHash: await hashPassword(OWN_PASSWORD), roles: ["viewer"] });
});

afterAll(async () => {
  await server?.close();
  await closeDb();
});

const decode = (value: string) =>
  value.replaceAll("&quot;", '"').replaceAll("&#x27;", "'").replaceAll("&lt;", "<").replaceAll("&gt;", ">").replaceAll("&amp;", "&");

/** The hidden fields React renders into a server-action form, so it also works without JavaScript. */
function hiddenFields(html: string): [string, string][] {
  const form = html.match(/<form[^>]*>([\s\S]*?)<\/form>/)?.[1] ?? "";
  return [...form.matchAll(/<input type="hidden" name="([^"]+)"(?: value="([^"]*)")?\/?>/g)].map((m) => [
    decode(m[1]!),
    decode(m[2] ?? ""),
  ]);
}

describe("account page", () => {
  it("renames the signed-in person through the server action, as a browser without JavaScript would", async () => {
    const agent = server.agent();
    await signIn(agent, OWN_EMAIL, OWN_PASSWORD);
    const page = await agent.get("/account").expect(200);
    const fields = hiddenFields(page.text);
    expect(fields.length).toBeGreaterThan(0);

    let post = agent.post("/account");
    for (const [name, value] of fields) post = post.field(name, value);
    const saved = await post.field("name", "Account page (renamed)").expect(200);
    expect(saved.text).toContain("Name saved.");

    const me = await agent.get("/api/v1/me").expect(200);
    expect(me.body.name).toBe("Account page (renamed)");
    const account = await agent.get("/account").expect(200);
    expect(account.text).toMatch(/>profile\.renamed<\/td>/);
  });

  it("refuses a one-letter name with a message and keeps the old one", async () => {
    const agent = server.agent();
    await signIn(agent, "viewer@velora.test", DEMO_PASSWORD);
    const page = await agent.get("/account").expect(200);
    let post = agent.post("/account");
    for (const [name, value] of hiddenFields(page.text)) post = post.field(name, value);
    const refused = await post.field("name", "x").expect(200);
    expect(refused.text).toContain("A name needs at least 2 characters.");
    const me = await agent.get("/api/v1/me").expect(200);
    expect(me.body.name).toBe("Velora viewer");
  });
});
