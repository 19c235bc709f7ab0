import request from "supertest";
import { startAppServer as startProductionServer } from "@/server/app-server";
import { REPO_ROOT, testDatabaseName } from "./test-database";

export interface AppServer {
  baseUrl: string;
  /** A cookie-keeping client, like one browser. */
  agent: () => ReturnType<typeof request.agent>;
  close: () => Promise<void>;
}

/**
 * The production build (.next, made by scripts/test.sh) served in this process on a free port; `trustedProxyHops`
 * as TRUSTED_PROXY_HOPS (default the configuration's, 0: the socket's address is the client's).
 */
export async function startAppServer(options: { trustedProxyHops?: number } = {}): Promise<AppServer> {
  testDatabaseName();
  // The same server as `npm start` (server/app-server.ts): Next.js, with token evaluations answered directly.
  const running = await startProductionServer({ dir: REPO_ROOT, hostname: "127.0.0.1", port: 0, quiet: true, ...options });
  const baseUrl = `http://127.0.0.1:${running.port}`;
  return { baseUrl, agent: () => request.agent(baseUrl), close: running.close };
}

type Agent = ReturnType<typeof request.agent>;

/** Signs in through next-auth's own endpoints as the sign-in form does; returns where it sends the browser. */
export async function signIn(agent: Agent, email: string, password: string): Promise<URL> {
  const csrf = await agent.get("/api/auth/csrf").expect(200);
  const response = await agent
    .post("/api/auth/callback/credentials")
    .type("form")
    .send({ csrfToken: csrf.body.csrfToken, email, password, json: "true" });
  // next-auth answers 200 on success and 401 on refusal, each with the URL the browser goes to next.
  if (response.status !== 200 && response.status !== 401) throw new Error(`sign-in answered ${response.status}`);
  const next = new URL(response.body.url);
  if ((response.status === 200) !== (next.searchParams.get("error") === null)) {
    throw new Error(`sign-in answered ${response.status} but sends the browser to ${next.href}`);
  }
  return next;
}
