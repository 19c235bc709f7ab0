import { createServer, type Server } from "node:net";
import knexFactory, { type Knex } from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { knexConfig } from "@/lib/db/knex-config";
import { closeDb, db } from "@/lib/db/knex";
import { DEPENDENCY_RETRY_AFTER_SECONDS } from "@/lib/errors";
import { closeQueueClients } from "@/lib/queue/enqueue";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { DATABASE_UNREACHABLE_MESSAGE } from "@/server/unavailable-page";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";

// Pages while the database cannot be reached: 503 with Retry-After and a page saying so (as the API answers), not
// the framework's error page with a 500; and the pages come back by themselves once it answers again. The outage is
// injected: the process's one pool (lib/db/knex.ts, kept on globalThis and shared by the framework's copy of lib/)
// is swapped for one pointing at a port where nothing listens (refused at once), or at a listener that accepts and
// never answers (a hung server: the connect timeout ends the wait).

const holder = globalThis as typeof globalThis & { __stillpointKnex?: Knex };
let server: AppServer;
let agent: ReturnType<AppServer["agent"]>;
let working: Knex;
let silent: Server;

async function freePort(): Promise<number> {
  const probe = createServer();
  await new Promise<void>((resolve) => probe.listen(0, "127.0.0.1", resolve));
  const { port } = probe.address() as { port: number };
  await new Promise((resolve) => probe.close(resolve));
  return port;
}

async function withDatabaseAt(port: number, check: () => Promise<void>): Promise<void> {
  const base = knexConfig();
  const broken = knexFactory({ ...base, connection: { ...(base.connection as object), port } });
  holder.__stillpointKnex = broken;
  try {
    await check();
  } finally {
    holder.__stillpointKnex = working;
    await broken.destroy();
  }
}

async function expectOutagePage(path: string): Promise<void> {
  const response = await agent.get(path);
  expect(response.status, path).toBe(503);
  expect(response.headers["retry-after"]).toBe(String(DEPENDENCY_RETRY_AFTER_SECONDS));
  expect(response.headers["content-type"]).toMatch(/^text\/html/);
  expect(response.headers["cache-control"]).toBe("no-store");
  expect(response.headers["content-security-policy"]).toMatch(/script-src 'self' 'nonce-/);
  expect(response.text).toContain(DATABASE_UNREACHABLE_MESSAGE);
  // The page's only style element carries the nonce of its policy.
  const nonce = /'nonce-([^']+)'/.exec(response.headers["content-security-policy"])![1];
  expect(response.text).toContain(`<style nonce="${nonce}">`);
  expect(response.text).not.toMatch(/<script/i);
}

beforeAll(async () => {
  server = await startAppServer();
  agent = server.agent();
  await signIn(agent, "viewer@velora.test", DEMO_PASSWORD);
  working = db();
  silent = createServer(() => {
    // accepts, never answers
  });
  await new Promise<void>((resolve) => silent.listen(0, "127.0.0.1", resolve));
});

afterAll(async () => {
  holder.__stillpointKnex = working;
  await new Promise((resolve) => silent?.close(resolve));
  await server?.close();
  await closeQueueClients();
  await closeDb();
});

describe("pages while the database is unreachable", () => {
  it("answer 503 with Retry-After and say so, the API its 503 problem, files as usual; and recover by themselves", async () => {
    await agent.get("/").expect(200);
    await withDatabaseAt(await freePort(), async () => {
      for (const path of ["/", "/models/velora-transmit", "/tokens", "/sign-in"]) await expectOutagePage(path);
      const head = await agent.head("/setups");
      expect(head.status).toBe(503);
      expect(head.headers["retry-after"]).toBe(String(DEPENDENCY_RETRY_AFTER_SECONDS));
      const api = await agent.get("/api/v1/me");
      expect(api.status).toBe(503);
      expect(api.headers["retry-after"]).toBe(String(DEPENDENCY_RETRY_AFTER_SECONDS));
      expect(api.headers["content-type"]).toMatch(/^application\/problem\+json/);
      await agent.get("/icon.svg").expect(200);
    });
    const back = await agent.get("/models/velora-transmit").expect(200);
    expect(back.text).not.toContain(DATABASE_UNREACHABLE_MESSAGE);
  });

  it("answer 503 as well when the database accepts connections but never answers", async () => {
    await withDatabaseAt((silent.address() as { port: number }).port, async () => {
      await expectOutagePage("/models/velora-transmit");
    });
    await agent.get("/").expect(200);
  });
});
