import http from "node:http";
import type { AddressInfo } from "node:net";
import next from "next";
import request from "supertest";
import { REPO_ROOT, testDatabaseName } from "./test-database";

export interface AppServer {
  baseUrl: string;
  /** A cookie-keeping client, like one browser. */
  agent: () => ReturnType<typeof request.agent>;
  close: () => Promise<void>;
}

/** The production build (.next, made by scripts/test.sh) served in this process on a free port. */
export async function startAppServer(): Promise<AppServer> {
  testDatabaseName();
  const app = next({ dev: false, dir: REPO_ROOT, quiet: true });
  await app.prepare();
  const handle = app.getRequestHandler();
  const server = http.createServer((req, res) => void handle(req, res));
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  const { port } = server.address() as AddressInfo;
  const baseUrl = `http://127.0.0.1:${port}`;
  return {
    baseUrl,
    agent: () => request.agent(baseUrl),
    close: async () => {
      server.closeAllConnections();
      await new Promise<void>((resolve, reject) => server.close((error) => (error ? reject(error) : resolve())));
      await app.close();
    },
  };
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
