import { spawn } from "node:child_process";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { sessionActor } from "@/lib/access/actor";
import { STATIC_SECURITY_HEADERS } from "@/lib/api/securityHeaders";
import { hashPassword } from "@/lib/auth/password";
import { closeDb, db } from "@/lib/db/knex";
import { createToken, revokeToken } from "@/lib/db/tokens";
import { createUser, getUser } from "@/lib/db/users";
import { closeQueueClients } from "@/lib/queue/enqueue";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";
import { REPO_ROOT } from "../helpers/test-database";

let server: AppServer;
let counter = 0;
const unique = () => `${process.pid}-${Date.now().toString(36)}-${counter++}`;

beforeAll(async () => {
  server = await startAppServer();
});

afterAll(async () => {
  await server?.close();
  await closeQueueClients();
  await closeDb();
});

describe("security headers", () => {
  const expectStatic = (headers: Headers) => {
    for (const { key, value } of STATIC_SECURITY_HEADERS) expect(headers.get(key), key).toBe(value);
  };

  it("a page: the static headers and a nonce policy that nothing may frame", async () => {
    const response = await fetch(`${server.baseUrl}/sign-in`);
    expect(response.status).toBe(200);
    expectStatic(response.headers);
    expect(response.headers.get("x-content-type-options")).toBe("nosniff");
    expect(response.headers.get("referrer-policy")).toBe("strict-origin-when-cross-origin");
    const policy = response.headers.get("content-security-policy") ?? "";
    const nonce = /'nonce-([A-Za-z0-9+/=]+)'/.exec(policy)?.[1];
    expect(nonce).toBeDefined();
    expect(policy).toContain("frame-ancestors 'none'");
    expect(policy).toContain("object-src 'none'");
    expect(policy).not.toMatch(/script-src[^;]*'unsafe-(inline|eval)'/);
    // Next put the nonce on every inline and external script of the document.
    const html = await response.text();
    const scripts = [...html.matchAll(/<script\b[^>]*>/g)].map((m) => m[0]);
    expect(scripts.length).toBeGreaterThan(0);
    for (const tag of scripts) expect(tag).toContain(`nonce="${nonce}"`);
    // A new nonce per response.
    const again = (await fetch(`${server.baseUrl}/sign-in`)).headers.get("content-security-policy");
    expect(again).not.toBe(policy);
  });

  it("the redirect of a signed-out visitor, an API answer and a static file carry them too", async () => {
    const redirect = await fetch(`${server.baseUrl}/tokens`, { redirect: "manual" });
    expect(redirect.status).toBe(307);
    expectStatic(redirect.headers);
    expect(redirect.headers.get("content-security-policy")).toContain("frame-ancestors 'none'");
    const api = await fetch(`${server.baseUrl}/api/v1/me`);
    expect(api.status).toBe(401);
    expectStatic(api.headers);
    expect(api.headers.get("content-security-policy")).toBe("default-src 'none'; frame-ancestors 'none'");
    const html = await (await fetch(`${server.baseUrl}/sign-in`)).text();
    const asset = /src="(\/_next\/static\/[^"]+\.js)"/.exec(html)?.[1];
    expect(asset).toBeDefined();
    const file = await fetch(`${server.baseUrl}${asset}`);
    expect(file.status).toBe(200);
    expectStatic(file.headers);
  });
});

describe("cross-site requests", () => {
  it("a server action posted from another origin is refused and changes nothing", async () => {
    const email = `csrf-${unique()}@velora.test`;
    const password = "cross-site-password";
    const id = await createUser({ email, name: "Before", passwordHash: await hashPassword(password), roles: ["viewer"] });
    const agent = server.agent();
    await signIn(agent, email, password);
    const page = await agent.get("/account").expect(200);
    const form = /<form[^>]*>([\s\S]*?)<\/form>/.exec(page.text)![1]!;
    const hidden = [...form.matchAll(/<input type="hidden" name="([^"]+)"(?: value="([^"]*)")?\/?>/g)].map((m) => [m[1]!.replaceAll("&quot;", '"'), (m[2] ?? "").replaceAll("&quot;", '"')] as const);
    expect(hidden.length).toBeGreaterThan(0);

    const post = (origin: string) => {
      let request = agent.post("/account").set("Origin", origin);
      for (const [name, value] of hidden) request = request.field(name, value);
      return request.field("name", `Renamed from ${origin}`);
    };
    const foreign = await post("http://evil.example");
    expect(foreign.status).toBeGreaterThanOrEqual(400);
    expect((await getUser(id))!.name).toBe("Before");
    // The same post from the app's own origin goes through: the refusal above is the origin check.
    const own = await post(server.baseUrl);
    expect(own.status).toBe(200);
    expect((await getUser(id))!.name).toBe(`Renamed from ${server.baseUrl}`);
  });
});

describe("secrets stay out of logs and error bodies", () => {
  it("a token, in every place a client may put one, appears in no log line and no answer", async () => {
    const owner = sessionActor((await getUser((await db()("users").where({ email: "modeller@velora.test" }).first()).id))!);
    const live = await createToken(owner, { name: `log-check ${unique()}`, scopes: ["read"], expiresAt: null, models: null });
    const revoked = await createToken(owner, { name: `log-check revoked ${unique()}`, scopes: ["read"], expiresAt: null, models: null });
    await revokeToken(owner, revoked.id);
    const secrets = [live.token, revoked.token, `stp_${"Z".repeat(43)}`];
    const captured: string[] = [];
    const restore: (() => void)[] = [];
    for (const stream of [process.stdout, process.stderr]) {
      const original = stream.write.bind(stream);
      stream.write = ((chunk: unknown, ...rest: unknown[]) => {
        captured.push(String(chunk));
        return (original as (...a: unknown[]) => boolean)(chunk, ...rest);
      }) as typeof stream.write;
      restore.push(() => (stream.write = original));
    }
    for (const level of ["log", "info", "warn", "error", "debug"] as const) {
      const original = console[level];
      console[level] = (...args: unknown[]) => {
        captured.push(args.map((a) => (a instanceof Error ? `${a.message} ${a.stack}` : typeof a === "string" ? a : JSON.stringify(a))).join(" "));
        original(...args);
      };
      restore.push(() => (console[level] = original));
    }
    const bodies: string[] = [];
    try {
      for (const secret of secrets) {
        const calls: [string, RequestInit][] = [
          ["/api/v1/me", { headers: { authorization: `Bearer ${secret}` } }],
          ["/api/v1/me", { headers: { authorization: `Token ${secret}` } }],
          [`/api/v1/models?q=${secret}`, { headers: { authorization: `Bearer ${secret}` } }],
          ["/api/v1/setups", { method: "POST", headers: { authorization: `Bearer ${live.token}`, "content-type": "application/json" }, body: JSON.stringify({ name: secret, setup: { wavelengthNm: secret } }) }],
          ["/api/v1/tokens", { method: "POST", headers: { "content-type": "application/json", authorization: `Bearer ${secret}` }, body: `{"name": "${secret}", ` }],
          ["/api/v1/models/velora-transmit/versions/2/evaluate", { method: "POST", headers: { authorization: `Bearer ${secret}`, "content-type": "application/json" }, body: JSON.stringify({ wavefronts: [{ ordering: secret }] }) }],
          ["/api/auth/callback/credentials", { method: "POST", headers: { "content-type": "application/x-www-form-urlencoded" }, body: `email=log-check-${process.pid}%40velora.test&password=${secret}&csrfToken=${secret}&json=true` }],
        ];
        for (const [url, init] of calls) {
          const response = await fetch(`${server.baseUrl}${url}`, { ...init, redirect: "manual" });
          bodies.push(`${response.status} ${[...response.headers].map(([k, v]) => `${k}: ${v}`).join("\n")}\n${await response.text()}`);
        }
      }
      await new Promise((resolve) => setTimeout(resolve, 1500)); // usage flushes and anything logged late
    } finally {
      for (const undo of restore.reverse()) undo();
    }
    expect(bodies.length).toBe(secrets.length * 7);
    for (const secret of secrets) {
      for (const body of bodies) expect(body.includes(secret), body.slice(0, 300)).toBe(false);
      for (const line of captured) expect(line.includes(secret), line.slice(0, 300)).toBe(false);
      // Nor its stored hint beyond the 10 characters the token list shows.
      for (const line of captured) expect(line.includes(secret.slice(0, 16))).toBe(false);
    }
  });

  it("the wrong password of a refused sign-in is in no audit row", async () => {
    const password = `audit-password-${unique()}`;
    await signIn(server.agent(), `audit-${unique()}@velora.test`, password);
    const rows: { detail: string | null }[] = await db()("audit_events").select("detail").orderBy("id", "desc").limit(20);
    expect(rows.some((r) => String(r.detail).includes(password))).toBe(false);
  });
});

describe("configuration is validated at start-up", () => {
  it("the production server refuses to start on a bad variable and names it", async () => {
    const child = spawn(process.execPath, [`${REPO_ROOT}/node_modules/next/dist/bin/next`, "start", "-p", "0", "-H", "127.0.0.1"], {
      cwd: REPO_ROOT,
      env: { ...process.env, DATABASE_PORT: "not-a-port", NEXTAUTH_SECRET: "short", NODE_ENV: "production" },
      stdio: ["ignore", "pipe", "pipe"],
    });
    let output = "";
    child.stdout.on("data", (chunk: Buffer) => (output += chunk.toString()));
    child.stderr.on("data", (chunk: Buffer) => (output += chunk.toString()));
    const started = Date.now();
    const code = await new Promise<number | null>((resolve) => {
      const timer = setTimeout(() => {
        child.kill("SIGKILL");
        resolve(null);
      }, 30_000);
      child.on("exit", (exitCode) => {
        clearTimeout(timer);
        resolve(exitCode);
      });
    });
    expect(code, output).not.toBe(null);
    expect(code).toBe(78);
    expect(Date.now() - started).toBeLessThan(30_000);
    expect(output).toContain("Stillpoint configuration is invalid");
    expect(output).toContain("DATABASE_PORT");
    expect(output).toContain("NEXTAUTH_SECRET: must be at least 32 characters");
  }, 40_000);
});
