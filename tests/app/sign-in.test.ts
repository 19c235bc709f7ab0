import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "@/lib/db/knex";
import { WRONG_CREDENTIALS_MESSAGE } from "@/lib/auth/messages";
import { DEMO_ACCOUNTS, DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";

let server: AppServer;

beforeAll(async () => {
  server = await startAppServer();
});

afterAll(async () => {
  await server?.close();
  await closeDb();
});

// React escapes apostrophes in text; compare against the page as a browser would read it.
const htmlText = (html: string) => html.replaceAll("&#x27;", "'").replaceAll("&quot;", '"').replaceAll("&amp;", "&");

describe("sign-in with the demo accounts", () => {
  it.each(DEMO_ACCOUNTS)("$email signs in and the home page shows who they are and their roles", async (account) => {
    const agent = server.agent();
    const landing = await signIn(agent, account.email, DEMO_PASSWORD);
    expect(landing.searchParams.get("error")).toBeNull();

    const me = await agent.get("/api/v1/me").expect(200);
    expect(me.body).toMatchObject({ email: account.email, name: account.name });
    expect([...me.body.roles].sort()).toEqual([...account.roles].sort());

    const home = await agent.get("/").expect(200);
    const text = htmlText(home.text);
    expect(text).toContain(account.name);
    for (const role of account.roles) expect(text).toContain(`>${role}</li>`);
    expect(text).toContain("velora-transmit"); // the seeded demo model
    expect(text).toContain("decisions about flight hardware rest on the exact calculation");
  });

  it("the sign-in page has labelled e-mail and password fields", async () => {
    const page = await server.agent().get("/sign-in").expect(200);
    expect(page.text).toMatch(/<label for="email"[^>]*>E-mail<\/label>/);
    expect(page.text).toMatch(/<label for="password"[^>]*>Password<\/label>/);
  });
});

describe("refused sign-in", () => {
  it("a wrong password is refused with a clear message on the sign-in page", async () => {
    const agent = server.agent();
    const landing = await signIn(agent, "modeller@velora.test", "not-the-password");
    expect(landing.searchParams.get("error")).toBe("CredentialsSignin");

    // next-auth's error route hands the browser on (through its own sign-in route) to our sign-in page.
    const page = await agent
      .get(landing.pathname + landing.search)
      .redirects(3)
      .expect(200);
    const signInPage = new URL(page.redirects.at(-1) ?? "", server.baseUrl);
    expect(signInPage.pathname).toBe("/sign-in");
    expect(signInPage.searchParams.get("error")).toBe("CredentialsSignin");
    expect(htmlText(page.text)).toContain(WRONG_CREDENTIALS_MESSAGE);
    expect(page.text).toContain('role="alert"');

    const me = await agent.get("/api/v1/me").expect(401);
    expect(me.headers["content-type"]).toContain("application/problem+json");
  });

  it("an unknown e-mail gets the same answer as a wrong password", async () => {
    const landing = await signIn(server.agent(), "nobody@velora.test", DEMO_PASSWORD);
    expect(landing.searchParams.get("error")).toBe("CredentialsSignin");
  });
});

describe("sign-out", () => {
  it("ends the session: the workspace redirects to sign-in again", async () => {
    const agent = server.agent();
    await signIn(agent, "viewer@velora.test", DEMO_PASSWORD);
    await agent.get("/").expect(200);

    const csrf = await agent.get("/api/auth/csrf").expect(200);
    await agent.post("/api/auth/signout").type("form").send({ csrfToken: csrf.body.csrfToken, json: "true" });

    const after = await agent.get("/").expect(307);
    expect(after.headers.location).toMatch(/^\/sign-in\?/);
    await agent.get("/api/v1/me").expect(401);
  });
});
