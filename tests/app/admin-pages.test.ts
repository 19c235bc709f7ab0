import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb, db } from "@/lib/db/knex";
import { AUDIT_CSV_COLUMNS, recordAuditEvent } from "@/lib/db/audit";
import { createInvitation } from "@/lib/db/invitations";
import { createToken, flushTokenUsage } from "@/lib/db/tokens";
import { closeMailQueue } from "@/lib/mail/queue";
import type { MailWorkerHandle } from "@/lib/mail/worker";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";
import { inProcessMailWorker, waitForMail } from "../helpers/mail";
import { actorFor } from "../helpers/registry";
import { modelWithReleasedVersions } from "../helpers/released";
import { actionId, callAction } from "../helpers/server-actions";

// The admin pages as each role meets them, rendered by the production build: admins see them, everybody else gets the
// forbidden page (signed-out visitors are redirected to sign-in: tests/app/access.test.ts finds every page on disk).
// Their server actions are called over HTTP as the framework's client does, by a viewer (refused, nothing changes); a
// retirement's notices are read back from the run's local mail sink.

type Agent = ReturnType<AppServer["agent"]>;
let server: AppServer;
let mailWorker: MailWorkerHandle;
const agents = new Map<string, Agent>();
const tag = `${process.pid}-${Date.now().toString(36)}`;

const text = (html: string) => html.replaceAll("&#x27;", "'").replaceAll("&quot;", '"').replaceAll("&amp;", "&").replaceAll("<!-- -->", "");
const FORBIDDEN = "Your roles do not include access to this page.";

beforeAll(async () => {
  server = await startAppServer();
  mailWorker = inProcessMailWorker();
  for (const role of ["viewer", "modeller", "reviewer", "admin"]) {
    const agent = server.agent();
    await signIn(agent, `${role}@velora.test`, DEMO_PASSWORD);
    agents.set(role, agent);
  }
});

afterAll(async () => {
  await mailWorker?.close();
  await closeMailQueue();
  await server?.close();
  await closeDb();
});

const as = (role: string) => agents.get(role)!;

describe("admin pages per role", () => {
  it.each(["/people", "/tokens/all", "/versions", "/audit"])("%s is forbidden to a viewer, a modeller and a reviewer", async (path) => {
    for (const role of ["viewer", "modeller", "reviewer"]) {
      const response = await as(role).get(path);
      expect(response.status).toBe(403);
      expect(text(response.text)).toContain(FORBIDDEN);
      expect(response.text).not.toContain("admin@velora.test</td>");
    }
  });

  it("shows the admin pages in an admin's navigation only", async () => {
    const adminHome = text((await as("admin").get("/").expect(200)).text);
    for (const [href, label] of [["/people", "People"], ["/tokens/all", "All tokens"], ["/versions", "Versions"], ["/audit", "Audit"]]) {
      expect(adminHome).toMatch(new RegExp(`<a[^>]*href="${href}"[^>]*>${label}</a>`));
    }
    const viewerHome = text((await as("viewer").get("/").expect(200)).text);
    expect(viewerHome).not.toMatch(/href="\/(people|tokens\/all|versions|audit)"/);
  });
});

describe("all tokens", () => {
  it("lists every person's tokens to an admin, filtered by owner, state and scope", async () => {
    const modeller = await actorFor("modeller@velora.test");
    const viewer = await actorFor("viewer@velora.test");
    const m = await createToken(modeller, { name: `all-m-${tag}`, scopes: ["train"], expiresAt: null, models: null });
    const v = await createToken(viewer, { name: `all-v-${tag}`, scopes: ["evaluate"], expiresAt: null, models: null });
    const page = text((await as("admin").get("/tokens/all").expect(200)).text);
    expect(page).toContain(`data-token-id="${m.id}"`);
    expect(page).toContain(`data-token-id="${v.id}"`);
    const byOwner = text((await as("admin").get("/tokens/all?owner=viewer%40velora.test").expect(200)).text);
    expect(byOwner).toContain(`data-token-id="${v.id}"`);
    expect(byOwner).not.toContain(`data-token-id="${m.id}"`);
    const byScope = text((await as("admin").get("/tokens/all?scope=train").expect(200)).text);
    expect(byScope).toContain(`data-token-id="${m.id}"`);
    expect(byScope).not.toContain(`data-token-id="${v.id}"`);
    await db()("api_tokens").where({ id: v.id }).update({ revoked_at: new Date() });
    const revoked = text((await as("admin").get("/tokens/all?state=revoked").expect(200)).text);
    expect(revoked).toContain(`data-token-id="${v.id}"`);
    expect(revoked).not.toContain(`data-token-id="${m.id}"`);
    // Nothing of a secret reaches the page beyond its first characters.
    expect(page).not.toContain(m.token);
  });
});

describe("the audit log", () => {
  it("records where a request came from: the socket's address, whatever X-Forwarded-For a client sends", async () => {
    const admin = await actorFor("admin@velora.test");
    const direct = await createToken(admin, { name: `addr-direct-${tag}`, scopes: ["read"], expiresAt: null, models: null });
    const forged = await createToken(admin, { name: `addr-forged-${tag}`, scopes: ["read"], expiresAt: null, models: null });
    await as("admin").delete(`/api/v1/tokens/${direct.id}`).expect(204);
    // No proxy is trusted by default (TRUSTED_PROXY_HOPS=0, as under npm start): the header proves nothing.
    await as("admin").delete(`/api/v1/tokens/${forged.id}`).set("X-Forwarded-For", "203.0.113.50").expect(204);
    const address = async (id: number) =>
      ((await db()("audit_events").where({ action: "token.revoke", subject_id: String(id) }).first()) as { client_address: string | null }).client_address;
    expect(await address(direct.id)).toBe("127.0.0.1");
    expect(await address(forged.id)).toBe("127.0.0.1");
    const page = text((await as("admin").get(`/audit?subject=api_token%3A${forged.id}`).expect(200)).text);
    expect(page).toContain("token.revoke");
    expect(page).toMatch(/data-testid="audit-address">127\.0\.0\.1</);
    expect(page).not.toContain("203.0.113.50");
  });

  it("filters by person and action and says when a filter cannot be read", async () => {
    const page = text((await as("admin").get("/audit?person=reviewer%40velora.test&action=sign-in").expect(200)).text);
    expect(page).toContain(">reviewer@velora.test</a>");
    expect(page).not.toContain(">viewer@velora.test</a>");
    const bad = text((await as("admin").get("/audit?action=DROP%20TABLE").expect(200)).text);
    expect(bad).toContain("action holds lower-case letters, dots and hyphens, e.g. token or token.revoke; showing every event instead.");
  });

  it("pages older events with a cursor", async () => {
    // More than a page of events, whatever else this run's database holds (the test files run in any order).
    for (let i = 0; i < 51; i++) await recordAuditEvent({ actorUserId: null, action: "paging-check", detail: { tag, i } });
    const first = text((await as("admin").get("/audit").expect(200)).text);
    const ids = [...first.matchAll(/data-audit-id="(\d+)"/g)].map((m) => Number(m[1]));
    expect(ids.length).toBe(50);
    const older = /href="(\/audit\?cursor=[A-Za-z0-9_-]+)"/.exec(first)![1];
    const next = text((await as("admin").get(older).expect(200)).text);
    const nextIds = [...next.matchAll(/data-audit-id="(\d+)"/g)].map((m) => Number(m[1]));
    expect(nextIds.length).toBeGreaterThan(0);
    expect(Math.max(...nextIds)).toBeLessThan(Math.min(...ids));
  });

  it("exports the filtered log as CSV to an admin; refuses others", async () => {
    const response = await as("admin").get("/audit/export?person=reviewer%40velora.test&action=sign-in").expect(200);
    expect(response.headers["content-type"]).toContain("text/csv");
    expect(response.headers["content-disposition"]).toMatch(/^attachment; filename="stillpoint-audit-[0-9-]+\.csv"$/);
    const lines = (response.text as string).split("\r\n").filter(Boolean);
    expect(lines[0]).toBe(AUDIT_CSV_COLUMNS.join(","));
    expect(lines.length).toBeGreaterThan(1);
    const stored: { id: number }[] = await db()("audit_events")
      .join("users", "users.id", "audit_events.actor_user_id")
      .where("users.email", "reviewer@velora.test")
      .where((w) => w.where("action", "sign-in").orWhere("action", "like", "sign-in.%"))
      .select("audit_events.id");
    expect(lines.length - 1).toBe(stored.length);
    for (const line of lines.slice(1)) expect(line).toMatch(/^\d+,\d{4}-\d\d-\d\dT[\d:.]+Z,reviewer@velora\.test,sign-in(\.[a-z-]+)?,/);

    const refused = await as("viewer").get("/audit/export").expect(403);
    expect(refused.headers["content-type"]).toContain("application/problem+json");
    const signedOut = await server.agent().get("/audit/export").redirects(0);
    expect(signedOut.status).toBe(307);
  });
});

describe("people", () => {
  it("shows an admin every account with its roles and state, and the invitations", async () => {
    const { invitation } = await createInvitation(await actorFor("admin@velora.test"), { email: `listed-${tag}@velora.test`, roles: ["reviewer"] });
    const page = text((await as("admin").get("/people").expect(200)).text);
    for (const role of ["viewer", "modeller", "reviewer", "admin"]) expect(page).toContain(`data-person="${role}@velora.test"`);
    expect(page).toContain('aria-label="Roles of modeller@velora.test"');
    expect(page).toContain(`data-invitation="${invitation.email}"`);
    expect(page).toMatch(/data-testid="account-state"><div[^>]*><span class="text-good">active<\/span>/);
  });

  it("refuses every people action to a viewer over HTTP, and nothing changes", async () => {
    const viewer = await actorFor("viewer@velora.test");
    const email = `http-refused-${tag}@velora.test`;
    const file = "app/(admin)/people/actions.ts";
    const { invitation } = await createInvitation(await actorFor("admin@velora.test"), { email: `kept-${tag}@velora.test`, roles: ["viewer"] });
    const calls: [string, unknown[]][] = [
      ["inviteAction", [{ email, roles: ["admin"] }]],
      ["setRolesAction", [{ userId: viewer.userId, roles: ["viewer", "admin"] }]],
      ["withdrawInvitationAction", [invitation.id]],
      ["disableAccountAction", [viewer.userId]],
    ];
    for (const [name, args] of calls) {
      const answer = await callAction(as("viewer"), "/people", actionId(file, name), args);
      expect(answer.status).toBe(200);
      expect(answer.text).toContain("This needs the admin role.");
      expect(answer.text).not.toContain('"ok":true');
    }
    expect(await db()("invitations").where({ email }).first()).toBeUndefined();
    expect(((await db()("invitations").where({ id: invitation.id }).first()) as { withdrawn_at: Date | null }).withdrawn_at).toBeNull();
    const roles: { role: string }[] = await db()("user_roles").where({ user_id: viewer.userId });
    expect(roles.map((r) => r.role)).toEqual(["viewer"]);
    expect(((await db()("users").where({ id: viewer.userId }).first()) as { disabled_at: Date | null }).disabled_at).toBeNull();
  });

  it("the accept page opens signed out and says why a dead link does not work", async () => {
    const page = await server.agent().get(`/invite/${"A".repeat(43)}`).redirects(0);
    expect(page.status).toBe(200);
    expect(text(page.text)).toContain("This invitation link is not known.");
  });
});

describe("versions", () => {
  it("lists live versions across models to an admin, with the retire form on released ones", async () => {
    const slug = await modelWithReleasedVersions(1);
    const page = text((await as("admin").get("/versions").expect(200)).text);
    expect(page).toContain('data-version-row="velora-transmit/2"');
    expect(page).toContain(`data-version-row="${slug}/1"`);
    expect(page).not.toContain('data-version-row="velora-transmit/1"'); // retired: under view=retired
    expect(page).toContain(`aria-label="Retire ${slug} version 1…"`);
    const retired = text((await as("admin").get("/versions?view=retired").expect(200)).text);
    expect(retired).toContain('data-version-row="velora-transmit/1"');
    expect(retired).toContain("generating set too small");
  });

  it("refuses the retirement to a viewer over HTTP; the version stays released", async () => {
    const slug = await modelWithReleasedVersions(1);
    const answer = await callAction(as("viewer"), "/versions", actionId("app/(admin)/versions/actions.ts", "retireVersionAction"), [
      slug, 1, { reason: "refused", sunsetAt: "2037-01-01T00:00:00Z", successorVersion: null },
    ]);
    expect(answer.status).toBe(200);
    expect(answer.text).toContain("This needs the admin role.");
    const row: { state: string } = await db()("model_versions").join("models", "models.id", "model_versions.model_id").where({ "models.slug": slug, version: 1 }).first();
    expect(row.state).toBe("released");
  });

  it("an admin's retirement over HTTP e-mails exactly the owners of tokens that evaluated the version in 90 days", async () => {
    const slug = await modelWithReleasedVersions(2);
    const modeller = await actorFor("modeller@velora.test");
    const reviewer = await actorFor("reviewer@velora.test");
    const viewer = await actorFor("viewer@velora.test");
    const user = await createToken(modeller, { name: `evaluates-${tag}`, scopes: ["evaluate"], expiresAt: null, models: null });
    const stale = await createToken(reviewer, { name: `stale-${tag}`, scopes: ["evaluate"], expiresAt: null, models: null });
    await createToken(viewer, { name: `idle-${tag}`, scopes: ["evaluate"], expiresAt: null, models: null });
    // A real evaluation by the modeller's token (counted in the server's memory, flushed by the retirement) ...
    const evaluated = await fetch(`${server.baseUrl}/api/v1/models/${slug}/versions/1/evaluate`, {
      method: "POST",
      headers: { authorization: `Bearer ${user.token}`, "content-type": "application/json" },
      body: JSON.stringify({ wavefronts: [{ ordering: "noll", coefficientsNm: { "4": 2 } }], output: "summary" }),
    });
    expect(evaluated.status).toBe(200);
    await flushTokenUsage();
    // ... and one by the reviewer's token 91 days ago, outside the window.
    const version: { id: number } = await db()("model_versions").join("models", "models.id", "model_versions.model_id").where({ "models.slug": slug, version: 1 }).select("model_versions.id").first();
    const longAgo = new Date(Date.now() - 91 * 86_400_000);
    await db()("token_version_usage").insert({ token_id: stale.id, version_id: version.id, day: longAgo.toISOString().slice(0, 10), requests: 1, wavefronts: 1, last_used_at: longAgo });

    const answer = await callAction(as("admin"), "/versions", actionId("app/(admin)/versions/actions.ts", "retireVersionAction"), [
      slug, 1, { reason: "superseded by version 2", sunsetAt: "2037-06-30T00:00:00Z", successorVersion: 2 },
    ]);
    expect(answer.text).toContain('"ok":true');
    const [mail] = await waitForMail((m) => m.kind === "version-retired" && m.subject.startsWith(`${slug} version 1 `));
    expect(mail.to).toEqual(["modeller@velora.test"]);
    expect(mail.subject).toBe(`${slug} version 1 is retired; evaluation ends 2037-06-30 00:00 UTC`);
    expect(mail.text).toContain("superseded by version 2");
    expect(mail.text).toContain("Its successor is version 2:");
    expect(mail.text).toContain(`"evaluates-${tag}"`);
    // Only that one: give the worker a moment for any other, then count what the sink holds about this version.
    await new Promise((resolve) => setTimeout(resolve, 1000));
    const all = await waitForMail((m) => m.kind === "version-retired" && m.subject.startsWith(`${slug} version 1 `), { timeoutMs: 100 });
    expect(all).toHaveLength(1);
    const page = text((await as("viewer").get(`/models/${slug}/versions/1`).expect(200)).text);
    expect(page).toMatch(/data-testid="retirement"[^>]*>Retired [^<]*: superseded by version 2\. Evaluation ends at the sunset, 2037-06-30 00:00 UTC/);
  });
});
