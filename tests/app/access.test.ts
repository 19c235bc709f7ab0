import { readdirSync, statSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { VELORA_SETUP } from "@/lib/demo/velora";
import { closeDb } from "@/lib/db/knex";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";
import { REPO_ROOT } from "../helpers/test-database";

let server: AppServer;

beforeAll(async () => {
  server = await startAppServer();
});

afterAll(async () => {
  await server?.close();
  await closeDb();
});

/** Every page under the signed-in route groups, found on disk so a new page is covered without editing this test. */
function workspacePages(): string[] {
  const routes: string[] = [];
  const walk = (dir: string, segments: string[]) => {
    for (const entry of readdirSync(dir)) {
      const full = path.join(dir, entry);
      if (statSync(full).isDirectory()) {
        if (entry.startsWith("[")) continue; // dynamic segments need real ids; covered by their own tests
        walk(full, entry.startsWith("(") ? segments : [...segments, entry]);
      } else if (entry === "page.tsx") {
        routes.push("/" + segments.join("/"));
      }
    }
  };
  for (const group of ["(workspace)", "(admin)"]) walk(path.join(REPO_ROOT, "app", group), []);
  return routes.sort();
}


describe("signed-out visitors", () => {
  const pages = workspacePages();

  it("the workspace has the pages this test expects to find", () => {
    expect(pages).toEqual(expect.arrayContaining(["/", "/account", "/people"]));
  });

  it.each(pages)("are redirected from %s to the sign-in page", async (page) => {
    const response = await server.agent().get(page).expect(307);
    const location = new URL(response.headers.location, server.baseUrl);
    expect(location.pathname).toBe("/sign-in");
    expect(location.searchParams.get("callbackUrl")).toBe(page);
  });

  it("get 401 problem details from the API", async () => {
    const response = await server.agent().post("/api/v1/setups/check").send(VELORA_SETUP).expect(401);
    expect(response.headers["content-type"]).toContain("application/problem+json");
    expect(response.body).toMatchObject({ status: 401, title: "Sign-in required" });
  });
});

describe("the modeller-only setup check", () => {
  it("refuses a viewer with 403 problem details", async () => {
    const agent = server.agent();
    await signIn(agent, "viewer@velora.test", DEMO_PASSWORD);
    const response = await agent.post("/api/v1/setups/check").send(VELORA_SETUP).expect(403);
    expect(response.headers["content-type"]).toContain("application/problem+json");
    expect(response.body).toEqual({
      type: "about:blank",
      title: "Not permitted",
      status: 403,
      detail: "This needs the modeller role.",
      instance: "/api/v1/setups/check",
    });
  });

  it("accepts the Velora setup from a modeller", async () => {
    const agent = server.agent();
    await signIn(agent, "modeller@velora.test", DEMO_PASSWORD);
    const response = await agent.post("/api/v1/setups/check").send(VELORA_SETUP).expect(200);
    expect(response.body).toEqual({ setup: VELORA_SETUP });
  });

  it("answers 422 with every field issue for a bad setup", async () => {
    const agent = server.agent();
    await signIn(agent, "modeller@velora.test", DEMO_PASSWORD);
    const bad = { ...VELORA_SETUP, wavelengthNm: -1, farField: { halfAngleNrad: 60, pointsPerAxis: 24 } };
    const response = await agent.post("/api/v1/setups/check").send(bad).expect(422);
    expect(response.headers["content-type"]).toContain("application/problem+json");
    expect(response.body.issues).toEqual(
      expect.arrayContaining([
        { path: "wavelengthNm", message: "wavelengthNm must be a positive finite number" },
        { path: "farField.pointsPerAxis", message: "farField.pointsPerAxis must be an odd integer >= 3" },
      ]),
    );
  });

  it("answers 400 for a body that is not JSON", async () => {
    const agent = server.agent();
    await signIn(agent, "modeller@velora.test", DEMO_PASSWORD);
    const response = await agent
      .post("/api/v1/setups/check")
      .set("content-type", "application/json")
      .send("{not json")
      .expect(400);
    expect(response.body.title).toBe("Malformed JSON");
  });
});

describe("navigation follows roles", () => {
  it("shows People to an admin, who can open it", async () => {
    const agent = server.agent();
    await signIn(agent, "admin@velora.test", DEMO_PASSWORD);
    const home = await agent.get("/").expect(200);
    expect(home.text).toMatch(/<a[^>]*href="\/people"[^>]*>People<\/a>/);
    const people = await agent.get("/people").expect(200);
    expect(people.text).toContain("reviewer@velora.test");
  });

  it("hides People from a modeller and refuses the page with 403", async () => {
    const agent = server.agent();
    await signIn(agent, "modeller@velora.test", DEMO_PASSWORD);
    const home = await agent.get("/").expect(200);
    expect(home.text).not.toMatch(/href="\/people"/);
    expect(home.text).toMatch(/<a[^>]*href="\/account"[^>]*>Account<\/a>/);
    const people = await agent.get("/people").expect(403);
    expect(people.text).toContain("Not permitted");
  });

  it("the account page lists the person's own sign-in in their recent activity", async () => {
    const agent = server.agent();
    await signIn(agent, "reviewer@velora.test", DEMO_PASSWORD);
    const account = await agent.get("/account").expect(200);
    expect(account.text).toContain("Your recent activity");
    expect(account.text).toMatch(/>sign-in<\/td>/);
  });
});
