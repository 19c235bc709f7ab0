import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { encode } from "next-auth/jwt";
import { sessionActor } from "@/lib/access/actor";
import { ACCOUNT_DISABLED, ACCOUNT_DISABLED_MESSAGE, SIGN_IN_RATE_LIMITED, SIGN_IN_RATE_LIMITED_MESSAGE } from "@/lib/auth/messages";
import { hashPassword } from "@/lib/auth/password";
import { recordFailedSignIn } from "@/lib/auth/signInLimit";
import { getConfig } from "@/lib/config";
import { listAuditEventsByActor } from "@/lib/db/audit";
import { closeDb, db } from "@/lib/db/knex";
import { createToken } from "@/lib/db/tokens";
import { createUser, disableUser, enableUser, getUser, sessionStanding } from "@/lib/db/users";
import { closeQueueClients } from "@/lib/queue/enqueue";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";
import { actionId, callAction } from "../helpers/server-actions";
import { actorFor } from "../helpers/registry";

let server: AppServer;
let counter = 0;
const unique = () => `${process.pid}-${Date.now().toString(36)}-${counter++}`;
const PASSWORD = "account-safety-password";

/** A person of this file's own, so that nothing here disturbs the demo accounts. */
async function person(roles: ("viewer" | "modeller")[] = ["viewer"]) {
  const email = `safety-${unique()}@velora.test`;
  const id = await createUser({ email, name: "Safety check", passwordHash: await hashPassword(PASSWORD), roles });
  return { id, email, actor: sessionActor((await getUser(id))!) };
}

/**
 * Each test signs in from its own address, so the per-address count of one test leaves the others alone: the server
 * here trusts one proxy in front of it (TRUSTED_PROXY_HOPS=1), whose X-Forwarded-For entry these requests play.
 * (Without a trusted proxy the socket's address counts and the header is ignored: tests/app/client-address.test.ts.)
 */
async function signInFrom(agent: ReturnType<AppServer["agent"]>, address: string, email: string, password: string): Promise<URL> {
  const csrf = await agent.get("/api/auth/csrf").expect(200);
  const response = await agent
    .post("/api/auth/callback/credentials")
    .set("x-forwarded-for", address)
    .type("form")
    .send({ csrfToken: csrf.body.csrfToken, email, password, json: "true" });
  return new URL(response.body.url);
}

beforeAll(async () => {
  server = await startAppServer({ trustedProxyHops: 1 });
});

afterAll(async () => {
  await server?.close();
  await closeQueueClients();
  await closeDb();
});

describe("disabled accounts", () => {
  it("stop at once: the open session, the person's tokens and any new sign-in are refused; re-enabling restores the tokens only", async () => {
    const admin = await actorFor("admin@velora.test");
    const { id, email, actor } = await person();
    const agent = server.agent();
    await signIn(agent, email, PASSWORD);
    const { token } = await createToken(actor, { name: "before disabling", scopes: ["read"], expiresAt: null, models: null });
    await agent.get("/api/v1/me").expect(200);
    const bearer = { authorization: `Bearer ${token}` };
    expect((await fetch(`${server.baseUrl}/api/v1/me`, { headers: bearer })).status).toBe(200);

    const disabled = await disableUser(admin, id);
    expect(disabled.disabledAt).not.toBeNull();

    const me = await agent.get("/api/v1/me").expect(401);
    expect(me.headers["content-type"]).toContain("application/problem+json");
    const page = await agent.get("/account").redirects(0);
    expect(page.status).toBe(307);
    expect(page.headers.location).toContain("/sign-in");
    const byToken = await fetch(`${server.baseUrl}/api/v1/me`, { headers: bearer });
    expect(byToken.status).toBe(401);
    expect((await byToken.json()).detail).toBe("The token's owner has been disabled.");

    // The right password learns that the account is disabled, and the sign-in page says so; a wrong one does not.
    const again = await signInFrom(server.agent(), `10.1.${counter}.1`, email, PASSWORD);
    expect(again.searchParams.get("error")).toBe(ACCOUNT_DISABLED);
    expect(decode((await server.agent().get(`/sign-in?error=${ACCOUNT_DISABLED}`).expect(200)).text)).toContain(ACCOUNT_DISABLED_MESSAGE);
    expect((await signInFrom(server.agent(), `10.1.${counter}.2`, email, "not the password")).searchParams.get("error")).toBe("CredentialsSignin");

    const events = await db()("audit_events").where({ action: "user.disable", subject_id: String(id) });
    expect(events).toHaveLength(1);
    expect(events[0].actor_user_id).toBe(admin.userId);

    await enableUser(admin, id);
    expect((await fetch(`${server.baseUrl}/api/v1/me`, { headers: bearer })).status).toBe(200);
    await agent.get("/api/v1/me").expect(401); // the session ended with the disabling and stays ended
    const back = server.agent();
    expect((await signInFrom(back, `10.2.${counter}.1`, email, PASSWORD)).searchParams.get("error")).toBeNull();
    await back.get("/api/v1/me").expect(200);
  });

  it("only admins disable, and nobody disables themselves", async () => {
    const { id } = await person();
    const modeller = await actorFor("modeller@velora.test");
    const admin = await actorFor("admin@velora.test");
    await expect(disableUser(modeller, id)).rejects.toThrow(/admin role/);
    await expect(disableUser(admin, admin.userId)).rejects.toThrow(/your own account/);
    expect((await sessionStanding(id))?.disabled).toBe(false);
  });
});

describe("changing one's password", () => {
  it("keeps this session, ends the others, and only the new password signs in", async () => {
    const { id, email } = await person();
    const here = server.agent();
    const elsewhere = server.agent();
    await signIn(here, email, PASSWORD);
    await signIn(elsewhere, email, PASSWORD);
    const epochBefore = (await sessionStanding(id))!.sessionEpoch;

    const fields = { currentPassword: PASSWORD, newPassword: "a new passphrase for safety", confirmPassword: "a new passphrase for safety" };
    const result = await postPasswordForm(here, fields);
    expect(result).toContain("Password changed.");
    expect((await sessionStanding(id))!.sessionEpoch).toBe(epochBefore + 1);

    await here.get("/api/v1/me").expect(200);
    await elsewhere.get("/api/v1/me").expect(401);
    expect((await signInFrom(server.agent(), `10.3.${counter}.1`, email, PASSWORD)).searchParams.get("error")).toBe("CredentialsSignin");
    const fresh = server.agent();
    expect((await signInFrom(fresh, `10.3.${counter}.2`, email, fields.newPassword)).searchParams.get("error")).toBeNull();
    await fresh.get("/api/v1/me").expect(200);
    const actions = (await listAuditEventsByActor(id, 10)).map((e) => e.action);
    expect(actions).toContain("password.change");
  });

  it("refuses a wrong current password, a short one and a mismatch, and changes nothing", async () => {
    const { id, email } = await person();
    const agent = server.agent();
    await signIn(agent, email, PASSWORD);
    const epoch = (await sessionStanding(id))!.sessionEpoch;
    expect(await postPasswordForm(agent, { currentPassword: "not it", newPassword: "long enough passphrase", confirmPassword: "long enough passphrase" })).toContain(
      "That is not your current password.",
    );
    expect(await postPasswordForm(agent, { currentPassword: PASSWORD, newPassword: "short", confirmPassword: "short" })).toContain("at least 12 characters");
    expect(await postPasswordForm(agent, { currentPassword: PASSWORD, newPassword: "long enough passphrase", confirmPassword: "long enough passphrasf" })).toContain(
      "The two new passwords differ.",
    );
    expect((await sessionStanding(id))!.sessionEpoch).toBe(epoch);
    await agent.get("/api/v1/me").expect(200);
  });

  it("is refused signed out", async () => {
    const id = actionId("app/(workspace)/account/actions.ts", "changePassword");
    const answer = await callAction(server.agent(), "/account", id, [{ status: "idle" }, {}]);
    expect(answer.text).not.toContain("Password changed");
    expect(await db()("audit_events").where({ action: "password.change", actor_user_id: null })).toHaveLength(0);
  });
});

const decode = (value: string) => value.replaceAll("&quot;", '"').replaceAll("&#x27;", "'").replaceAll("&lt;", "<").replaceAll("&gt;", ">").replaceAll("&amp;", "&");

/** Posts the account page's password form as a browser without JavaScript does (React's hidden action fields). */
async function postPasswordForm(agent: ReturnType<AppServer["agent"]>, fields: Record<string, string>): Promise<string> {
  const page = await agent.get("/account").expect(200);
  const form = [...page.text.matchAll(/<form[^>]*>([\s\S]*?)<\/form>/g)].map((m) => m[1]!).find((f) => f.includes('name="currentPassword"'));
  if (!form) throw new Error("the account page has no password form");
  let post = agent.post("/account");
  for (const m of form.matchAll(/<input type="hidden" name="([^"]+)"(?: value="([^"]*)")?\/?>/g)) post = post.field(decode(m[1]!), decode(m[2] ?? ""));
  for (const [name, value] of Object.entries(fields)) post = post.field(name, value);
  const answer = await post.expect(200);
  return decode(answer.text);
}

describe("sessions", () => {
  it("expire: a session token past its maxAge is refused", async () => {
    const { id, email } = await person();
    const expired = await encode({
      token: { userId: id, email, name: "Safety check", roles: ["viewer"], sessionEpoch: 0 },
      secret: process.env.NEXTAUTH_SECRET!,
      // Expired a minute ago: next-auth's decode allows 15 s of clock skew.
      maxAge: -60,
    });
    const response = await fetch(`${server.baseUrl}/api/v1/me`, { headers: { cookie: `next-auth.session-token=${expired}` } });
    expect(response.status).toBe(401);
    // The same token within its lifetime is accepted: the refusal above is the expiry, not a malformed cookie.
    const live = await encode({ token: { userId: id, email, name: "Safety check", roles: ["viewer"], sessionEpoch: 0 }, secret: process.env.NEXTAUTH_SECRET!, maxAge: 60 });
    expect((await fetch(`${server.baseUrl}/api/v1/me`, { headers: { cookie: `next-auth.session-token=${live}` } })).status).toBe(200);
  });

  it("are carried in an httpOnly, SameSite=Lax cookie whose lifetime is the configured maxAge", async () => {
    const { email } = await person();
    const agent = server.agent();
    const csrf = await agent.get("/api/auth/csrf").expect(200);
    const csrfCookies = ([] as string[]).concat(csrf.headers["set-cookie"] ?? []);
    expect(csrfCookies.find((c) => c.startsWith("next-auth.csrf-token="))).toMatch(/HttpOnly/i);
    expect(csrfCookies.find((c) => c.startsWith("next-auth.csrf-token="))).toMatch(/SameSite=Lax/i);
    const response = await agent
      .post("/api/auth/callback/credentials")
      .set("x-forwarded-for", `10.4.${counter}.1`)
      .type("form")
      .send({ csrfToken: csrf.body.csrfToken, email, password: PASSWORD, json: "true" })
      .expect(200);
    const session = ([] as string[]).concat(response.headers["set-cookie"] ?? []).find((c) => c.startsWith("next-auth.session-token="));
    expect(session).toBeDefined();
    expect(session).toMatch(/HttpOnly/i);
    expect(session).toMatch(/SameSite=Lax/i);
    expect(session).toMatch(/Path=\//);
    const expires = new Date(/Expires=([^;]+)/i.exec(session!)![1]!).getTime();
    const maxAge = getConfig().sessionMaxAgeSeconds * 1000;
    expect(Math.abs(expires - Date.now() - maxAge)).toBeLessThan(60_000);
  });

  it("a sign-in form post without next-auth's CSRF token is refused and signs nobody in", async () => {
    const { email } = await person();
    const agent = server.agent();
    const response = await agent
      .post("/api/auth/callback/credentials")
      .set("x-forwarded-for", `10.5.${counter}.1`)
      .type("form")
      .send({ csrfToken: "forged", email, password: PASSWORD, json: "true" });
    expect(new URL(response.body.url ?? response.headers.location, server.baseUrl).searchParams.get("csrf")).toBe("true");
    await agent.get("/api/v1/me").expect(401);
  });
});

describe("sign-in attempts are limited", () => {
  const { attemptsPerAccount, attemptsPerAddress } = { attemptsPerAccount: 10, attemptsPerAddress: 100 };

  it(`per account: after ${attemptsPerAccount} failures even the right password is refused, from any address`, async () => {
    expect(getConfig().signIn.attemptsPerAccount).toBe(attemptsPerAccount);
    const { id, email } = await person();
    for (let i = 0; i < attemptsPerAccount; i++) {
      const landing = await signInFrom(server.agent(), `10.6.${i}.1`, email, `wrong ${i}`);
      expect(landing.searchParams.get("error")).toBe("CredentialsSignin");
    }
    const agent = server.agent();
    const blocked = await signInFrom(agent, "10.6.200.1", email, PASSWORD);
    expect(blocked.searchParams.get("error")).toBe(SIGN_IN_RATE_LIMITED);
    await agent.get("/api/v1/me").expect(401);
    const page = await agent.get(`/sign-in?error=${SIGN_IN_RATE_LIMITED}`).expect(200);
    expect(decode(page.text)).toContain(SIGN_IN_RATE_LIMITED_MESSAGE);
    expect(await db()("audit_events").where({ action: "sign-in.rate-limited" }).whereRaw("JSON_VALUE(detail, '$.email') = ?", [email])).toHaveLength(1);
    void id;
  });

  it("a success before the limit clears the account's count", async () => {
    const { email } = await person();
    for (let round = 0; round < 2; round++) {
      for (let i = 0; i < attemptsPerAccount - 1; i++) await signInFrom(server.agent(), `10.7.${round}.${i}`, email, "wrong");
      expect((await signInFrom(server.agent(), `10.7.${round}.250`, email, PASSWORD)).searchParams.get("error")).toBeNull();
    }
  });

  it(`per address: after ${attemptsPerAddress} failures from one address, another account is refused there but not elsewhere`, async () => {
    expect(getConfig().signIn.attemptsPerAddress).toBe(attemptsPerAddress);
    const address = `10.8.${process.pid % 250}.9`;
    // The failures are counted straight into the shared limiter (the same Redis keys the server uses): 100 bcrypt
    // comparisons over HTTP would take most of a minute.
    for (let i = 0; i < attemptsPerAddress; i++) await recordFailedSignIn(`nobody-${i}-${unique()}@velora.test`, address);
    const { email } = await person();
    expect((await signInFrom(server.agent(), address, email, PASSWORD)).searchParams.get("error")).toBe(SIGN_IN_RATE_LIMITED);
    expect((await signInFrom(server.agent(), "10.8.251.9", email, PASSWORD)).searchParams.get("error")).toBeNull();
  });
});
