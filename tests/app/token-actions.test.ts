import { afterAll, beforeEach, describe, expect, it, vi } from "vitest";
import { closeDb, db } from "@/lib/db/knex";
import { authenticateToken, createToken, forgetCachedTokens } from "@/lib/db/tokens";
import { actorFor } from "../helpers/registry";
import { testDatabaseName } from "../helpers/test-database";

// The tokens page's server actions called as plain functions, with the session next-auth would read replaced by the
// one each test sets: nothing stands in front of them, so every refusal here is the action's own (a server action is a
// public POST endpoint). tokens-page.test.ts calls them through the production build.

let session: { user: { id: number } } | null = null;
vi.mock("next-auth", async (importOriginal) => ({
  ...(await importOriginal<typeof import("next-auth")>()),
  getServerSession: vi.fn(async () => session),
}));
vi.mock("next/cache", () => ({ revalidatePath: vi.fn() }));

const { createTokenAction, revokeTokenAction } = await import("@/app/(workspace)/tokens/actions");

testDatabaseName();
const tag = `${process.pid}-${Date.now().toString(36)}`;

async function signInAs(email: string | null) {
  session = email === null ? null : { user: { id: (await actorFor(email)).userId } };
}

const SIGNED_OUT = { ok: false, formError: "Sign in to use this resource.", fieldErrors: {} };

beforeEach(() => {
  session = null;
});

afterAll(async () => {
  await closeDb();
});

async function modellersToken(name: string): Promise<{ id: number; token: string }> {
  const created = await createToken(await actorFor("modeller@velora.test"), { name, scopes: ["read", "evaluate"], expiresAt: null, models: null });
  return { id: created.id, token: created.token };
}

const revokedAt = async (id: number) => ((await db()("api_tokens").where({ id }).first()) as { revoked_at: Date | null }).revoked_at;

describe("createTokenAction", () => {
  it("refuses a signed-out caller and stores nothing", async () => {
    const name = `signed-out-${tag}`;
    expect(await createTokenAction({ name, scopes: ["read", "evaluate"], expiresAt: null, models: null })).toEqual(SIGNED_OUT);
    expect(await db()("api_tokens").where({ name }).first()).toBeUndefined();
  });

  it("refuses the train scope to a reviewer and an admin (not modellers), and stores nothing", async () => {
    for (const email of ["reviewer@velora.test", "admin@velora.test"]) {
      await signInAs(email);
      const name = `train-${email}-${tag}`;
      expect(await createTokenAction({ name, scopes: ["train"], expiresAt: null, models: null })).toEqual({
        ok: false,
        formError: 'The "train" scope needs the modeller role.',
        fieldErrors: {},
      });
      expect(await db()("api_tokens").where({ name }).first()).toBeUndefined();
    }
  });

  it("answers the shared schema's messages beside their fields", async () => {
    await signInAs("viewer@velora.test");
    const answer = await createTokenAction({ name: "", scopes: [], expiresAt: "2020-01-01T00:00:00Z", models: [] });
    expect(answer.ok).toBe(false);
    if (answer.ok) return;
    expect(Object.keys(answer.fieldErrors).sort()).toEqual(["expiresAt", "models", "name", "scopes"]);
    expect(answer.fieldErrors.scopes).toBe("a token needs at least one scope");
    expect(answer.fieldErrors.expiresAt).toBe("expiresAt must lie in the future");
  });

  it("gives a modeller a train token whose secret works once and is stored only as a hash", async () => {
    await signInAs("modeller@velora.test");
    const name = `modeller-train-${tag}`;
    const answer = await createTokenAction({ name, scopes: ["train", "read"], expiresAt: null, models: ["velora-transmit"] });
    expect(answer.ok).toBe(true);
    if (!answer.ok) return;
    expect(answer.data.token).toMatch(/^stp_[A-Za-z0-9_-]{43}$/);
    const row: { secret_sha256: string; scopes: unknown } = await db()("api_tokens").where({ id: answer.data.id }).first();
    expect(JSON.stringify(row)).not.toContain(answer.data.token);
    const actor = await authenticateToken(answer.data.token);
    expect(typeof actor === "object" && actor.scopes).toEqual(["read", "train"]);
  });
});

describe("revokeTokenAction", () => {
  it("refuses a signed-out caller; the token keeps working", async () => {
    const { id, token } = await modellersToken(`revoke-signed-out-${tag}`);
    expect(await revokeTokenAction(id)).toEqual(SIGNED_OUT);
    expect(await revokedAt(id)).toBeNull();
    forgetCachedTokens();
    expect(typeof (await authenticateToken(token))).toBe("object");
  });

  it("refuses another person's token to a viewer as if it did not exist", async () => {
    const { id } = await modellersToken(`revoke-other-${tag}`);
    await signInAs("viewer@velora.test");
    expect(await revokeTokenAction(id)).toEqual({ ok: false, formError: `There is no token ${id}.`, fieldErrors: {} });
    expect(await revokedAt(id)).toBeNull();
  });

  it("refuses an id that is not a token id", async () => {
    await signInAs("viewer@velora.test");
    expect(await revokeTokenAction("1 OR 1=1")).toEqual({ ok: false, formError: "token id must be an integer", fieldErrors: {} });
  });

  it("revokes the owner's token; its secret fails at once", async () => {
    const { id, token } = await modellersToken(`revoke-own-${tag}`);
    expect(typeof (await authenticateToken(token))).toBe("object"); // now in the token cache
    await signInAs("modeller@velora.test");
    expect(await revokeTokenAction(id)).toEqual({ ok: true, data: { id } });
    expect(await revokedAt(id)).not.toBeNull();
    expect(await authenticateToken(token)).toBe("revoked");
  });

  it("lets an admin revoke anybody's token", async () => {
    const { id, token } = await modellersToken(`revoke-admin-${tag}`);
    await signInAs("admin@velora.test");
    expect(await revokeTokenAction(id)).toEqual({ ok: true, data: { id } });
    expect(await authenticateToken(token)).toBe("revoked");
  });
});
