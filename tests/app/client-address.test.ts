import http from "node:http";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { sessionActor } from "@/lib/access/actor";
import { clientAddress, CLIENT_ADDRESS_HEADER, requestAddress, UNKNOWN_ADDRESS } from "@/lib/auth/address";
import { SIGN_IN_RATE_LIMITED } from "@/lib/auth/messages";
import { hashPassword } from "@/lib/auth/password";
import { recordFailedSignIn } from "@/lib/auth/signInLimit";
import { getConfig, parseConfig } from "@/lib/config";
import { closeDb, db } from "@/lib/db/knex";
import { createToken } from "@/lib/db/tokens";
import { createUser, getUser } from "@/lib/db/users";
import { closeQueueClients } from "@/lib/queue/enqueue";
import { startAppServer, type AppServer } from "../helpers/app-server";

// Where a request came from, as the sign-in limit per address and the audit log see it: one function
// (lib/auth/address.ts), fed by the production server from the socket, X-Forwarded-For only as far as
// TRUSTED_PROXY_HOPS trusts it. The full-stack part connects from different loopback addresses (127.0.0.0/8 is all
// loopback) to the default server, which trusts no proxy: the socket's address counts, a client's header does not.
// (A server trusting one proxy: tests/app/account-safety.test.ts.)

describe("clientAddress", () => {
  const socket = "10.0.0.5";
  it("with no trusted proxy is the socket's peer, whatever X-Forwarded-For says", () => {
    expect(clientAddress(socket, undefined, 0)).toBe(socket);
    expect(clientAddress(socket, "203.0.113.9", 0)).toBe(socket);
    expect(clientAddress(socket, ["203.0.113.9", "198.51.100.7"], 0)).toBe(socket);
  });

  it("with k trusted proxies is the k-th X-Forwarded-For entry from the right (what the outermost one saw)", () => {
    // The client wrote 192.0.2.1 itself; the first proxy appended 198.51.100.7, the second 203.0.113.9.
    const chain = "192.0.2.1, 198.51.100.7,203.0.113.9";
    expect(clientAddress(socket, chain, 1)).toBe("203.0.113.9");
    expect(clientAddress(socket, chain, 2)).toBe("198.51.100.7");
    expect(clientAddress(socket, ["192.0.2.1", "198.51.100.7, 203.0.113.9"], 2)).toBe("198.51.100.7");
  });

  it("with a chain shorter than the trusted proxies is its furthest entry, and without one the socket", () => {
    expect(clientAddress(socket, "198.51.100.7", 3)).toBe("198.51.100.7");
    expect(clientAddress(socket, undefined, 1)).toBe(socket);
    expect(clientAddress(socket, " , ", 1)).toBe(socket);
    expect(clientAddress(undefined, undefined, 0)).toBe(UNKNOWN_ADDRESS);
  });

  it("writes an IPv4 address a dual-stack socket reports as ::ffff:a.b.c.d in its usual form", () => {
    expect(clientAddress("::ffff:127.0.0.1", undefined, 0)).toBe("127.0.0.1");
    expect(clientAddress("::1", undefined, 0)).toBe("::1");
    expect(clientAddress("2001:db8::7", undefined, 0)).toBe("2001:db8::7");
  });
});

describe("requestAddress", () => {
  it("reads the production server's header alone, never X-Forwarded-For", () => {
    expect(requestAddress(new Headers({ [CLIENT_ADDRESS_HEADER]: "198.51.100.7", "x-forwarded-for": "203.0.113.9" }))).toBe("198.51.100.7");
    expect(requestAddress({ [CLIENT_ADDRESS_HEADER]: ["198.51.100.7"] })).toBe("198.51.100.7");
    expect(requestAddress(new Headers({ "x-forwarded-for": "203.0.113.9" }))).toBe(UNKNOWN_ADDRESS);
    expect(requestAddress(undefined)).toBe(UNKNOWN_ADDRESS);
  });
});

describe("TRUSTED_PROXY_HOPS", () => {
  it("defaults to 0 and must be a whole number from 0 to 10", () => {
    expect(parseConfig({}).trustedProxyHops).toBe(0);
    expect(parseConfig({ TRUSTED_PROXY_HOPS: "2" }).trustedProxyHops).toBe(2);
    for (const bad of ["-1", "1.5", "eleven", "11"]) expect(() => parseConfig({ TRUSTED_PROXY_HOPS: bad }), bad).toThrow(/TRUSTED_PROXY_HOPS/);
  });
});

// ---- over HTTP, from chosen loopback addresses ----

let server: AppServer;
let counter = 0;
const PASSWORD = "client-address-password";

interface Answer {
  status: number;
  cookies: string[];
  text: string;
}

/** One request from `localAddress` (node:http: the test clients of the other files cannot choose their source). */
function from(localAddress: string, method: string, path: string, headers: Record<string, string> = {}, body?: string): Promise<Answer> {
  const url = new URL(path, server.baseUrl);
  return new Promise((resolve, reject) => {
    const request = http.request({ host: url.hostname, port: url.port, path: url.pathname + url.search, method, headers, localAddress }, (response) => {
      let text = "";
      response.setEncoding("utf8");
      response.on("data", (chunk: string) => (text += chunk));
      response.on("end", () => resolve({ status: response.statusCode ?? 0, cookies: (response.headers["set-cookie"] ?? []).map((c) => c.split(";")[0]), text }));
    });
    request.once("error", reject);
    request.end(body);
  });
}

/** Signs in through next-auth's endpoints from `localAddress`; the session cookie, or the error code of the refusal. */
async function signInFrom(localAddress: string, email: string, password: string, forwardedFor?: string): Promise<{ session?: string; error: string | null }> {
  const extra: Record<string, string> = forwardedFor ? { "x-forwarded-for": forwardedFor } : {};
  const csrf = await from(localAddress, "GET", "/api/auth/csrf", extra);
  const { csrfToken } = JSON.parse(csrf.text) as { csrfToken: string };
  const answer = await from(
    localAddress,
    "POST",
    "/api/auth/callback/credentials",
    { ...extra, "content-type": "application/x-www-form-urlencoded", cookie: csrf.cookies.join("; ") },
    new URLSearchParams({ csrfToken, email, password, json: "true" }).toString(),
  );
  const error = new URL((JSON.parse(answer.text) as { url: string }).url).searchParams.get("error");
  return { session: answer.cookies.find((c) => c.startsWith("next-auth.session-token=")), error };
}

async function person(): Promise<{ id: number; email: string }> {
  const email = `address-${process.pid}-${Date.now().toString(36)}-${counter++}@velora.test`;
  const id = await createUser({ email, name: "Address check", passwordHash: await hashPassword(PASSWORD), roles: ["viewer"] });
  return { id, email };
}

beforeAll(async () => {
  server = await startAppServer();
});

afterAll(async () => {
  await server?.close();
  await closeQueueClients();
  await closeDb();
});

describe("the default server (no trusted proxy)", () => {
  it("records a refused sign-in at the socket's address, not the one the client's header claims", async () => {
    const { email } = await person();
    expect((await signInFrom("127.0.0.2", email, "wrong", "203.0.113.9")).error).toBe("CredentialsSignin");
    const events: { client_address: string; detail: string | { address: string } }[] = await db()("audit_events")
      .where({ action: "sign-in.refused" })
      .whereRaw("JSON_VALUE(detail, '$.email') = ?", [email]);
    expect(events).toHaveLength(1);
    expect(events[0].client_address).toBe("127.0.0.2");
    const detail = typeof events[0].detail === "string" ? (JSON.parse(events[0].detail) as { address: string }) : events[0].detail;
    expect(detail.address).toBe("127.0.0.2");
  });

  it("limits sign-ins per socket address: a spent address stays refused whatever header it sends; another is let in", async () => {
    const { attemptsPerAddress } = getConfig().signIn;
    // The failures go straight into the server's limiter (its Redis keys): that many bcrypt comparisons over HTTP
    // would take most of a minute.
    for (let i = 0; i < attemptsPerAddress; i++) await recordFailedSignIn(`nobody-${i}-${process.pid}-${counter}@velora.test`, "127.0.0.3");
    const { email } = await person();
    expect((await signInFrom("127.0.0.3", email, PASSWORD)).error).toBe(SIGN_IN_RATE_LIMITED);
    expect((await signInFrom("127.0.0.3", email, PASSWORD, "127.0.0.4")).error).toBe(SIGN_IN_RATE_LIMITED);
    const elsewhere = await signInFrom("127.0.0.4", email, PASSWORD, "127.0.0.3");
    expect(elsewhere.error).toBeNull();
    expect(elsewhere.session).toBeDefined();
  });

  it("records an API action at the address of the socket it came over", async () => {
    const { id, email } = await person();
    const { session } = await signInFrom("127.0.0.5", email, PASSWORD);
    const token = await createToken(sessionActor((await getUser(id))!), { name: "address check", scopes: ["read"], expiresAt: null, models: null });
    const revoked = await from("127.0.0.6", "DELETE", `/api/v1/tokens/${token.id}`, { cookie: session!, "x-forwarded-for": "198.51.100.99", [CLIENT_ADDRESS_HEADER]: "198.51.100.98" });
    expect(revoked.status).toBe(204);
    const event: { client_address: string } = await db()("audit_events").where({ action: "token.revoke", subject_id: String(token.id) }).first();
    expect(event.client_address).toBe("127.0.0.6");
  });
});
