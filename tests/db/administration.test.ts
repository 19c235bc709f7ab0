import { createHash } from "node:crypto";
import { afterAll, describe, expect, it } from "vitest";
import { sessionActor } from "@/lib/access/actor";
import { auditEventsCsv, AUDIT_CSV_COLUMNS, csvField, listAuditEvents, recordAuditEvent } from "@/lib/db/audit";
import { acceptInvitation, createInvitation, INVITATION_HOURS, INVITATION_REFUSALS, openInvitation, withdrawInvitation } from "@/lib/db/invitations";
import { closeDb, db } from "@/lib/db/knex";
import { fromJson } from "@/lib/db/rows";
import { setUserRoles } from "@/lib/db/roles";
import { createToken, listTokens, NOTICE_WINDOW_DAYS, noticeWindowStart, recentVersionUsers } from "@/lib/db/tokens";
import { createUser, getUser } from "@/lib/db/users";
import { ConflictError, ForbiddenError, UnprocessableError } from "@/lib/errors";
import { auditQuerySchema } from "@/lib/validation/audit";
import { actorFor } from "../helpers/registry";
import { testDatabaseName } from "../helpers/test-database";

testDatabaseName();
const tag = `${process.pid}-${Date.now().toString(36)}`;
let counter = 0;
const email = (what: string) => `${what}-${tag}-${counter++}@velora.test`;

afterAll(async () => {
  await closeDb();
});

async function newPerson(roles: ("viewer" | "modeller" | "reviewer" | "admin")[], conn = db()) {
  const id = await createUser({ email: email("person"), name: "Test person", passwordHash: "unused", roles }, conn);
  return sessionActor((await getUser(id, conn))!);
}

describe("invitations", () => {
  it("store only the SHA-256 of the link's secret and open with the secret itself", async () => {
    const admin = await actorFor("admin@velora.test");
    const to = email("invitee");
    const { invitation, secret } = await createInvitation(admin, { email: to.toUpperCase(), roles: ["viewer", "modeller"] });
    expect(secret).toMatch(/^[A-Za-z0-9_-]{43}$/); // 32 random bytes in base64url
    const row: Record<string, unknown> = await db()("invitations").where({ id: invitation.id }).first();
    expect(JSON.stringify(row)).not.toContain(secret);
    expect(row.secret_sha256).toBe(createHash("sha256").update(secret).digest("hex"));
    expect(invitation).toMatchObject({ email: to, roles: ["viewer", "modeller"], state: "pending", invitedBy: "admin@velora.test" });
    expect(Date.parse(invitation.expiresAt) - Date.parse(invitation.createdAt)).toBe(INVITATION_HOURS * 3600_000);
    expect(await openInvitation(secret)).toMatchObject({ ok: true, email: to, roles: ["viewer", "modeller"] });
    expect(await openInvitation(secret.slice(0, -1) + (secret.endsWith("A") ? "B" : "A"))).toEqual({ ok: false, reason: "unknown" });
  });

  it("are used once: the second acceptance is refused and no second account appears", async () => {
    const admin = await actorFor("admin@velora.test");
    const to = email("once");
    const { secret } = await createInvitation(admin, { email: to, roles: ["reviewer"] });
    const first = await acceptInvitation(secret, { name: "Once", passwordHash: "h1" }, "192.0.2.7");
    const user = await getUser(first.userId);
    expect(user).toMatchObject({ email: to, name: "Once", roles: ["reviewer"] });
    await expect(acceptInvitation(secret, { name: "Twice", passwordHash: "h2" }, null)).rejects.toThrow(INVITATION_REFUSALS.accepted);
    expect(await openInvitation(secret)).toEqual({ ok: false, reason: "accepted" });
    expect(await db()("users").where({ email: to }).count({ n: "*" })).toEqual([{ n: 1 }]);
    const audit: { action: string; client_address: string; actor_user_id: number } = await db()("audit_events").where({ action: "invitation.accept", actor_user_id: first.userId }).first();
    expect(audit.client_address).toBe("192.0.2.7");
  });

  it("two acceptances at once open one account", async () => {
    const admin = await actorFor("admin@velora.test");
    const to = email("race");
    const { secret } = await createInvitation(admin, { email: to, roles: ["viewer"] });
    const results = await Promise.allSettled([
      acceptInvitation(secret, { name: "A", passwordHash: "a" }, null),
      acceptInvitation(secret, { name: "B", passwordHash: "b" }, null),
    ]);
    expect(results.filter((r) => r.status === "fulfilled")).toHaveLength(1);
    expect(await db()("users").where({ email: to }).count({ n: "*" })).toEqual([{ n: 1 }]);
  });

  it("expire after INVITATION_HOURS", async () => {
    const admin = await actorFor("admin@velora.test");
    const sent = new Date();
    const { secret } = await createInvitation(admin, { email: email("late"), roles: ["viewer"] }, sent);
    const justBefore = new Date(sent.getTime() + INVITATION_HOURS * 3600_000 - 1000);
    const after = new Date(sent.getTime() + INVITATION_HOURS * 3600_000);
    expect((await openInvitation(secret, justBefore)).ok).toBe(true);
    expect(await openInvitation(secret, after)).toEqual({ ok: false, reason: "expired" });
    await expect(acceptInvitation(secret, { name: "Late", passwordHash: "x" }, null, after)).rejects.toThrow(INVITATION_REFUSALS.expired);
  });

  it("are replaced by a newer one to the same address, and can be withdrawn", async () => {
    const admin = await actorFor("admin@velora.test");
    const to = email("again");
    const old = await createInvitation(admin, { email: to, roles: ["viewer"] });
    const fresh = await createInvitation(admin, { email: to, roles: ["viewer", "reviewer"] });
    expect(await openInvitation(old.secret)).toEqual({ ok: false, reason: "withdrawn" });
    expect((await openInvitation(fresh.secret)).ok).toBe(true);
    await withdrawInvitation(admin, fresh.invitation.id);
    expect(await openInvitation(fresh.secret)).toEqual({ ok: false, reason: "withdrawn" });
    await expect(withdrawInvitation(admin, fresh.invitation.id)).rejects.toBeInstanceOf(ConflictError);
  });

  it("refuse an address that has an account, and anybody but an admin", async () => {
    const admin = await actorFor("admin@velora.test");
    await expect(createInvitation(admin, { email: "viewer@velora.test", roles: ["viewer"] })).rejects.toThrow("There is already an account for viewer@velora.test.");
    const viewer = await actorFor("viewer@velora.test");
    const to = email("refused");
    await expect(createInvitation(viewer, { email: to, roles: ["admin"] })).rejects.toBeInstanceOf(ForbiddenError);
    expect(await db()("invitations").where({ email: to }).first()).toBeUndefined();
  });

  it("refuse a malformed secret without a query that could match", async () => {
    expect(await openInvitation("' OR 1=1 --")).toEqual({ ok: false, reason: "unknown" });
    await expect(acceptInvitation("", { name: "X", passwordHash: "x" }, null)).rejects.toBeInstanceOf(UnprocessableError);
  });
});

describe("roles", () => {
  it("an admin sets a person's roles, audited with before and after", async () => {
    const admin = await actorFor("admin@velora.test");
    const person = await newPerson(["viewer"]);
    const after = await setUserRoles({ ...admin, clientAddress: "198.51.100.4" }, person.userId, ["modeller", "viewer"]);
    expect(after.roles).toEqual(["viewer", "modeller"]);
    const event: { detail: unknown; client_address: string } = await db()("audit_events").where({ action: "user.roles", subject_id: String(person.userId) }).first();
    expect(fromJson(event.detail)).toMatchObject({ from: ["viewer"], to: ["viewer", "modeller"] });
    expect(event.client_address).toBe("198.51.100.4");
  });

  it("refuses a viewer", async () => {
    const viewer = await actorFor("viewer@velora.test");
    const person = await newPerson(["viewer"]);
    await expect(setUserRoles(viewer, person.userId, ["admin"])).rejects.toBeInstanceOf(ForbiddenError);
    expect((await getUser(person.userId))!.roles).toEqual(["viewer"]);
  });

  it("keeps the last admin an admin; with a second admin the first may step down", async () => {
    // In a transaction that is rolled back: the other admins' roles are taken away only inside it.
    const trx = await db().transaction();
    try {
      const only = await newPerson(["viewer", "admin"], trx);
      await trx("user_roles").where({ role: "admin" }).whereNot({ user_id: only.userId }).delete();
      await expect(setUserRoles(only, only.userId, ["viewer"], trx)).rejects.toThrow("You are the last admin: give another person the admin role before you give it up.");
      expect((await getUser(only.userId, trx))!.roles).toContain("admin");
      const second = await newPerson(["viewer"], trx);
      await setUserRoles(only, second.userId, ["viewer", "admin"], trx);
      expect((await setUserRoles(only, only.userId, ["viewer"], trx)).roles).toEqual(["viewer"]);
      // Now the second is the last admin; the first (no longer admin) cannot act at all.
      await expect(setUserRoles({ ...only, roles: ["viewer"] }, second.userId, ["viewer"], trx)).rejects.toBeInstanceOf(ForbiddenError);
    } finally {
      await trx.rollback();
    }
    expect(await db()("user_roles").where({ role: "admin" }).count({ n: "*" })).not.toEqual([{ n: 0 }]);
  });
});

describe("every person's tokens", () => {
  it("filter by owner, state and scope", async () => {
    const admin = await actorFor("admin@velora.test");
    const owner = await newPerson(["viewer", "modeller"]);
    const a = await createToken(owner, { name: `a-${tag}`, scopes: ["read"], expiresAt: null, models: null });
    const b = await createToken(owner, { name: `b-${tag}`, scopes: ["evaluate", "train"], expiresAt: null, models: null });
    const c = await createToken(owner, { name: `c-${tag}`, scopes: ["evaluate"], expiresAt: new Date(Date.now() + 60_000).toISOString(), models: null });
    await db()("api_tokens").where({ id: a.id }).update({ revoked_at: new Date() });
    const names = async (filter: Parameters<typeof listTokens>[1]) => (await listTokens(admin, { all: true, owner: owner.email, ...filter })).map((t) => t.name);
    expect(await names({})).toEqual([a.name, b.name, c.name]);
    expect(await names({ state: "revoked" })).toEqual([a.name]);
    expect(await names({ state: "active" })).toEqual([b.name, c.name]);
    expect(await names({ state: "expired", now: new Date(Date.now() + 120_000) })).toEqual([c.name]);
    expect(await names({ scope: "evaluate" })).toEqual([b.name, c.name]);
    expect(await names({ scope: "train", state: "active" })).toEqual([b.name]);
    await expect(listTokens(owner, { all: true })).rejects.toBeInstanceOf(ForbiddenError);
  });
});

describe("who evaluated a version lately", () => {
  it("counts the owners of tokens with usage inside the last NOTICE_WINDOW_DAYS UTC days, today included", async () => {
    const version: { id: number } = await db()("model_versions").join("models", "models.id", "model_versions.model_id").where({ "models.slug": "velora-transmit", "model_versions.version": 2 }).select("model_versions.id").first();
    const now = new Date("2027-05-31T12:00:00Z");
    // 90 days counting 2027-05-31 itself reach back to 2027-03-03 (March 3 + 89 days = May 31).
    expect(NOTICE_WINDOW_DAYS).toBe(90);
    expect(noticeWindowStart(now)).toBe("2027-03-03");
    const inside = await newPerson(["viewer"]);
    const edge = await newPerson(["viewer"]);
    const outside = await newPerson(["viewer"]);
    const tokens = await Promise.all(
      [inside, edge, outside].map((p, i) => createToken(p, { name: `usage-${i}-${tag}`, scopes: ["evaluate"], expiresAt: null, models: null })),
    );
    const use = (tokenId: number, day: string) => db()("token_version_usage").insert({ token_id: tokenId, version_id: version.id, day, requests: 1, wavefronts: 1, last_used_at: new Date(`${day}T10:00:00Z`) });
    await use(tokens[0].id, "2027-05-30");
    await use(tokens[1].id, "2027-03-03");
    await use(tokens[2].id, "2027-03-02");
    const found = (await recentVersionUsers(version.id, now)).filter((u) => [inside, edge, outside].some((p) => p.userId === u.userId));
    expect(found.map((u) => u.email).sort()).toEqual([inside.email, edge.email].sort());
    expect(found.find((u) => u.userId === inside.userId)!.tokens).toEqual([`usage-0-${tag}`]);
  });
});

describe("the audit log", () => {
  it("filters by person, action (with sub-actions) and subject, pages newest first, and exports the same as CSV", async () => {
    const admin = await actorFor("admin@velora.test");
    const person = await newPerson(["viewer"]);
    await recordAuditEvent({ actorUserId: person.userId, action: "sign-in", subjectType: "user", subjectId: person.userId, clientAddress: "203.0.113.9" });
    await recordAuditEvent({ actorUserId: person.userId, action: "token.create", subjectType: "api_token", subjectId: 77, detail: { name: 'say "hi", =1+1' } });
    await recordAuditEvent({ actorUserId: person.userId, action: "token.revoke", subjectType: "api_token", subjectId: 77 });
    await recordAuditEvent({ actorUserId: person.userId, action: "tokenish", subjectType: "api_token", subjectId: 78 });
    const q = (extra: Record<string, unknown>) => auditQuerySchema.parse({ person: person.email.toUpperCase(), ...extra });

    const all = await listAuditEvents(admin, q({}));
    expect(all.items.map((e) => e.action)).toEqual(["tokenish", "token.revoke", "token.create", "sign-in"]);
    expect(all.items[3]).toMatchObject({ actorEmail: person.email, clientAddress: "203.0.113.9" });
    expect((await listAuditEvents(admin, q({ action: "token" }))).items.map((e) => e.action)).toEqual(["token.revoke", "token.create"]);
    expect((await listAuditEvents(admin, q({ action: "token.create" }))).items.map((e) => e.action)).toEqual(["token.create"]);
    expect((await listAuditEvents(admin, q({ subject: "api_token:77" }))).items.map((e) => e.action)).toEqual(["token.revoke", "token.create"]);
    expect((await listAuditEvents(admin, q({ subject: "user" }))).items.map((e) => e.action)).toEqual(["sign-in"]);

    const first = await listAuditEvents(admin, q({ limit: 3 }));
    expect(first.items).toHaveLength(3);
    const second = await listAuditEvents(admin, q({ limit: 3, cursor: first.nextCursor }));
    expect(second.items.map((e) => e.action)).toEqual(["sign-in"]);
    expect(second.nextCursor).toBeNull();

    const csv = await auditEventsCsv(admin, q({}));
    const lines = csv.split("\r\n");
    expect(lines[0]).toBe(AUDIT_CSV_COLUMNS.join(","));
    expect(lines).toHaveLength(6); // header, four events, and the empty string after the last CRLF
    const created = all.items[2];
    // RFC 4180: a field holding quotes or commas is quoted, its quotes doubled.
    expect(lines[3]).toBe(`${created.id},${created.occurredAt},${person.email},token.create,api_token,77,,"{""name"":""say \\""hi\\"", =1+1""}"`);
    expect(lines[4]).toBe(`${all.items[3].id},${all.items[3].occurredAt},${person.email},sign-in,user,${person.userId},203.0.113.9,`);
    await expect(listAuditEvents(person, q({}))).rejects.toBeInstanceOf(ForbiddenError);
    await expect(auditEventsCsv(person, q({}))).rejects.toBeInstanceOf(ForbiddenError);
  });

  it("writes CSV fields by RFC 4180 and defuses spreadsheet formulas", () => {
    expect(csvField(null)).toBe("");
    expect(csvField(12)).toBe("12");
    expect(csvField("plain")).toBe("plain");
    expect(csvField('a,"b"')).toBe('"a,""b"""');
    expect(csvField("line\nbreak")).toBe('"line\nbreak"');
    expect(csvField("=HYPERLINK(1)")).toBe("'=HYPERLINK(1)");
    expect(csvField("-1")).toBe("'-1");
  });
});
