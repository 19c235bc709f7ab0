import { afterAll, beforeEach, describe, expect, it, vi } from "vitest";
import { closeDb, db } from "@/lib/db/knex";
import { createInvitation, INVITATION_HOURS, INVITATION_REFUSALS } from "@/lib/db/invitations";
import { createToken } from "@/lib/db/tokens";
import { getUser } from "@/lib/db/users";
import { CLIENT_ADDRESS_HEADER } from "@/lib/auth/address";
import { verifyPassword } from "@/lib/auth/password";
import { getConfig } from "@/lib/config";
import { authenticateToken } from "@/lib/db/tokens";
import { createUser } from "@/lib/db/users";
import { actorFor } from "../helpers/registry";
import { modelWithReleasedVersions } from "../helpers/released";
import { testDatabaseName } from "../helpers/test-database";

// The admin pages' server actions and the invitation's accept action called as plain functions, with the session
// next-auth would read replaced by the one each test sets: no proxy and no page stand in front, so every refusal here
// is the action's own. admin-pages.test.ts calls them over HTTP through the production build.

let session: { user: { id: number } } | null = null;
vi.mock("next-auth", async (importOriginal) => ({
  ...(await importOriginal<typeof import("next-auth")>()),
  getServerSession: vi.fn(async () => session),
}));
vi.mock("next/cache", () => ({ revalidatePath: vi.fn() }));
// The request's headers as the production server hands them over: the client's address it worked out (the one the
// audit events record), and a forged X-Forwarded-For beside it that must not count.
vi.mock("next/headers", () => ({
  headers: vi.fn(async () => new Headers({ host: "registry.velora.test", [CLIENT_ADDRESS_HEADER]: "192.0.2.10", "x-forwarded-for": "198.51.100.66" })),
}));

const { disableAccountAction, enableAccountAction, inviteAction, setRolesAction, withdrawInvitationAction } = await import("@/app/(admin)/people/actions");
const { retireVersionAction } = await import("@/app/(admin)/versions/actions");
const { acceptInvitationAction } = await import("@/app/(auth)/invite/[secret]/actions");

testDatabaseName();
const tag = `${process.pid}-${Date.now().toString(36)}`;
let counter = 0;
const address = (what: string) => `${what}-${tag}-${counter++}@velora.test`;

async function signInAs(email: string | null) {
  session = email === null ? null : { user: { id: (await actorFor(email)).userId } };
}

const SIGNED_OUT = { ok: false, formError: "Sign in to use this resource.", fieldErrors: {} };
const NOT_ADMIN = { ok: false, formError: "This needs the admin role.", fieldErrors: {} };

beforeEach(() => {
  session = null;
});

afterAll(async () => {
  await closeDb();
});

describe("people actions, with no proxy in front", () => {
  it("inviteAction refuses a signed-out caller and every role but admin, and stores nothing", async () => {
    const email = address("refused");
    for (const who of [null, "viewer@velora.test", "modeller@velora.test", "reviewer@velora.test"]) {
      await signInAs(who);
      expect(await inviteAction({ email, roles: ["admin"] })).toEqual(who === null ? SIGNED_OUT : NOT_ADMIN);
    }
    expect(await db()("invitations").where({ email }).first()).toBeUndefined();
  });

  it("inviteAction stores an admin's invitation, queues its e-mail with the link, and answers field messages", async () => {
    await signInAs("admin@velora.test");
    expect(await inviteAction({ email: "not an address", roles: [] })).toEqual({
      ok: false,
      formError: "Some fields need attention.",
      fieldErrors: { email: "Enter an e-mail address.", roles: "Give at least one role (to shut an account, disable it)." },
    });
    expect(await inviteAction({ email: "viewer@velora.test", roles: ["viewer"] })).toEqual({
      ok: false, formError: null, fieldErrors: { email: "There is already an account for viewer@velora.test." },
    });
    const email = address("invited");
    const answer = await inviteAction({ email, roles: ["viewer", "reviewer"] });
    expect(answer.ok).toBe(true);
    const invitation: { id: number; expires_at: Date; created_at: Date } = await db()("invitations").where({ email }).first();
    expect(new Date(invitation.expires_at).getTime() - new Date(invitation.created_at).getTime()).toBe(INVITATION_HOURS * 3600_000);
    const mail: { kind: string; subject: string; body: string } = await db()("notifications").where({ recipient: email }).first();
    expect(mail.kind).toBe("invitation");
    // The link names the configured public address (PUBLIC_BASE_URL), never the request's Host header.
    const link = new RegExp(`${getConfig().mail.publicBaseUrl.replaceAll(".", "\\.")}/invite/([A-Za-z0-9_-]{43})\n`).exec(mail.body);
    expect(link).not.toBeNull();
    expect(mail.body).not.toContain("registry.velora.test");
    const audit: { client_address: string } = await db()("audit_events").where({ action: "invitation.create", subject_id: String(invitation.id) }).first();
    expect(audit.client_address).toBe("192.0.2.10");
  });

  it("withdrawInvitationAction refuses a viewer; the link keeps working", async () => {
    const { invitation } = await createInvitation(await actorFor("admin@velora.test"), { email: address("kept"), roles: ["viewer"] });
    await signInAs("viewer@velora.test");
    expect(await withdrawInvitationAction(invitation.id)).toEqual(NOT_ADMIN);
    expect(((await db()("invitations").where({ id: invitation.id }).first()) as { withdrawn_at: Date | null }).withdrawn_at).toBeNull();
  });

  it("setRolesAction refuses a viewer, and the last admin's own demotion is refused with its reason", async () => {
    const viewer = await actorFor("viewer@velora.test");
    await signInAs("viewer@velora.test");
    expect(await setRolesAction({ userId: viewer.userId, roles: ["viewer", "admin"] })).toEqual(NOT_ADMIN);
    expect((await getUser(viewer.userId))!.roles).toEqual(["viewer"]);
    await signInAs("admin@velora.test");
    expect(await setRolesAction({ userId: viewer.userId, roles: [] })).toEqual({
      ok: false, formError: "Some fields need attention.", fieldErrors: { roles: "Give at least one role (to shut an account, disable it)." },
    });
  });
});

describe("disabling an account", () => {
  it("is refused to a viewer; an admin's disabling stops the person's tokens at once and is undone by enabling", async () => {
    const id = await createUser({ email: address("switched"), name: "Switched", passwordHash: "unused", roles: ["viewer"] });
    const person = await actorFor((await getUser(id))!.email);
    const token = await createToken(person, { name: `switched-${tag}`, scopes: ["read"], expiresAt: null, models: null });
    expect(typeof (await authenticateToken(token.token))).toBe("object"); // now in this process's token cache
    await signInAs("viewer@velora.test");
    expect(await disableAccountAction(id)).toEqual(NOT_ADMIN);
    expect((await getUser(id))!.disabledAt).toBeNull();
    await signInAs("admin@velora.test");
    const disabled = await disableAccountAction(id);
    expect(disabled.ok && disabled.data.disabledAt).toBeTruthy();
    expect(await authenticateToken(token.token)).toBe("disabled");
    const admin = await actorFor("admin@velora.test");
    expect(await disableAccountAction(admin.userId)).toEqual({ ok: false, formError: "You cannot disable your own account.", fieldErrors: {} });
    expect(await enableAccountAction(id)).toEqual({ ok: true, data: { userId: id, disabledAt: null } });
    expect(typeof (await authenticateToken(token.token))).toBe("object");
    const events: { action: string; client_address: string }[] = await db()("audit_events").where({ subject_type: "user", subject_id: String(id) }).orderBy("id");
    expect(events.map((e) => [e.action, e.client_address])).toEqual([["user.disable", "192.0.2.10"], ["user.enable", "192.0.2.10"]]);
  });
});

describe("the invitation's accept action (no session: the link is the credential)", () => {
  it("creates the account once with the chosen password; a second use and a dead link are refused", async () => {
    const email = address("accepts");
    const { secret } = await createInvitation(await actorFor("admin@velora.test"), { email, roles: ["viewer"] });
    const values = { name: "New colleague", password: "a long enough secret", confirm: "a long enough secret" };
    expect(await acceptInvitationAction(secret, { ...values, confirm: "something else" })).toEqual({
      ok: false, formError: "Some fields need attention.", fieldErrors: { confirm: "The two passwords differ." },
    });
    expect(await acceptInvitationAction(secret, { ...values, password: "short", confirm: "short" })).toMatchObject({
      ok: false, fieldErrors: { password: "A password needs at least 12 characters." },
    });
    expect(await acceptInvitationAction(secret, values)).toEqual({ ok: true, data: { email } });
    const row: { id: number; password_hash: string } = await db()("users").where({ email }).first();
    expect(await verifyPassword(values.password, row.password_hash)).toBe(true);
    expect((await getUser(row.id))!.roles).toEqual(["viewer"]);
    expect(await acceptInvitationAction(secret, values)).toEqual({ ok: false, formError: INVITATION_REFUSALS.accepted, fieldErrors: {} });
    expect(await acceptInvitationAction("x".repeat(43), values)).toEqual({ ok: false, formError: INVITATION_REFUSALS.unknown, fieldErrors: {} });
  });

  it("refuses an expired link", async () => {
    const email = address("expired");
    const sent = new Date(Date.now() - INVITATION_HOURS * 3600_000 - 1000);
    const { secret } = await createInvitation(await actorFor("admin@velora.test"), { email, roles: ["viewer"] }, sent);
    expect(await acceptInvitationAction(secret, { name: "Too late", password: "a long enough secret", confirm: "a long enough secret" })).toEqual({
      ok: false, formError: INVITATION_REFUSALS.expired, fieldErrors: {},
    });
    expect(await db()("users").where({ email }).first()).toBeUndefined();
  });
});

describe("retireVersionAction", () => {
  it("refuses a signed-out caller and every role but admin; the version stays released", async () => {
    const slug = await modelWithReleasedVersions(1);
    const input = { reason: "superseded", sunsetAt: "2037-01-01T00:00:00Z", successorVersion: null };
    for (const who of [null, "viewer@velora.test", "modeller@velora.test", "reviewer@velora.test"]) {
      await signInAs(who);
      expect(await retireVersionAction(slug, 1, input)).toEqual(who === null ? SIGNED_OUT : NOT_ADMIN);
    }
    const row: { state: string } = await db()("model_versions").join("models", "models.id", "model_versions.model_id").where({ "models.slug": slug, version: 1 }).first();
    expect(row.state).toBe("released");
  });

  it("retires with reason, sunset and successor, and queues a notice for each recent token owner only", async () => {
    const slug = await modelWithReleasedVersions(2);
    const version: { id: number } = await db()("model_versions").join("models", "models.id", "model_versions.model_id").where({ "models.slug": slug, version: 1 }).select("model_versions.id").first();
    const recent = await actorFor("modeller@velora.test");
    const long = await actorFor("reviewer@velora.test");
    const recentToken = await createToken(recent, { name: `recent-${tag}`, scopes: ["evaluate"], expiresAt: null, models: null });
    const oldToken = await createToken(long, { name: `old-${tag}`, scopes: ["evaluate"], expiresAt: null, models: null });
    const day = (daysAgo: number) => new Date(Date.now() - daysAgo * 86_400_000).toISOString().slice(0, 10);
    await db()("token_version_usage").insert([
      { token_id: recentToken.id, version_id: version.id, day: day(3), requests: 4, wavefronts: 40, last_used_at: new Date() },
      { token_id: oldToken.id, version_id: version.id, day: day(120), requests: 1, wavefronts: 1, last_used_at: new Date() },
    ]);
    await signInAs("admin@velora.test");
    expect(await retireVersionAction(slug, 1, { reason: "", sunsetAt: "2037-01-01T00:00:00Z", successorVersion: null })).toMatchObject({ ok: false, fieldErrors: { reason: "reason must not be empty" } });
    expect(await retireVersionAction(slug, 1, { reason: "generating set too small", sunsetAt: "2037-03-01T00:00:00Z", successorVersion: 2 })).toEqual({ ok: true, data: { notices: 1 } });
    const row: { state: string; retired_reason: string } = await db()("model_versions").where({ id: version.id }).first();
    expect(row).toMatchObject({ state: "retired", retired_reason: "generating set too small" });
    const notices: { recipient: string; kind: string; subject: string; body: string }[] = await db()("notifications").where({ version_id: version.id, kind: "version-retired" });
    expect(notices.map((n) => n.recipient)).toEqual(["modeller@velora.test"]);
    expect(notices[0].kind).toBe("version-retired");
    expect(notices[0].subject).toBe(`${slug} version 1 is retired; evaluation ends 2037-03-01 00:00 UTC`);
    expect(notices[0].body).toContain("Its successor is version 2:");
    expect(notices[0].body).toContain(`${getConfig().mail.publicBaseUrl}/models/${slug}/versions/2`);
    expect(notices[0].body).toContain(`"recent-${tag}"`);
    // Retiring it again is a conflict, and sends nothing more.
    expect(await retireVersionAction(slug, 1, { reason: "again", sunsetAt: "2037-03-01T00:00:00Z", successorVersion: null })).toEqual({
      ok: false, formError: "Version 1 is retired; only a released version can be retired.", fieldErrors: {},
    });
    expect(await db()("notifications").where({ version_id: version.id, kind: "version-retired" }).count({ n: "*" })).toEqual([{ n: 1 }]);
  });

  it("refuses a sunset in the past and a successor that is not a live version of the model", async () => {
    const slug = await modelWithReleasedVersions(1);
    await signInAs("admin@velora.test");
    expect(await retireVersionAction(slug, 1, { reason: "x", sunsetAt: "2020-01-01T00:00:00Z", successorVersion: null })).toEqual({ ok: false, formError: "sunsetAt must lie in the future.", fieldErrors: {} });
    // MariaDB's TIMESTAMP ends at 2^31 - 1 s after the epoch, 2038-01-19T03:14:07Z.
    expect(await retireVersionAction(slug, 1, { reason: "x", sunsetAt: "2038-01-19T03:14:08Z", successorVersion: null })).toMatchObject({
      ok: false, fieldErrors: { sunsetAt: "sunsetAt must lie before 2038-01-19T03:14:07Z, the last time the registry stores" },
    });
    expect(await retireVersionAction(slug, 1, { reason: "x", sunsetAt: "2037-01-01T00:00:00Z", successorVersion: 9 })).toEqual({
      ok: false, formError: `successorVersion 9 is not a live version of "${slug}".`, fieldErrors: {},
    });
  });
});
