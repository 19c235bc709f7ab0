import { createHash, randomBytes, timingSafeEqual } from "node:crypto";
import type { Knex } from "knex";
import { assertCan, can, TOKEN_SCOPES, type Actor, type TokenScope } from "../access/actor.ts";
import { isRole, type Role } from "../access/roles.ts";
import { NotFoundError, UnprocessableError } from "../errors.ts";
import type { CreateTokenInput } from "../validation/registry.ts";
import { auditedBy, recordAuditEvent } from "./audit.ts";
import { db } from "./knex.ts";
import { fromJson, toIso } from "./rows.ts";

/** Every secret starts with this, so that a leaked one is recognisable (and found by secret scanners). */
export const TOKEN_PREFIX = "stp_";
const SECRET_BYTES = 32; // 256 bits
const TOKEN_PATTERN = /^stp_[A-Za-z0-9_-]{43}$/;

interface TokenRow {
  id: number;
  user_id: number;
  name: string;
  secret_sha256: string;
  secret_hint: string;
  scopes: string | TokenScope[];
  models: string | string[] | null;
  expires_at: Date | null;
  created_at: Date;
  last_used_at: Date | null;
  use_count: number | string;
  revoked_at: Date | null;
}

/** A token as `GET /tokens` lists it (never its secret). */
export interface TokenItem {
  id: number;
  name: string;
  scopes: TokenScope[];
  models: string[] | null;
  expiresAt: string | null;
  createdAt: string;
  lastUsedAt: string | null;
  useCount: number;
  revokedAt: string | null;
  hint: string;
  owner: string;
}

function hashSecret(secret: string): string {
  return createHash("sha256").update(secret).digest("hex");
}

function toItem(row: TokenRow, owner: string): TokenItem {
  return {
    id: row.id,
    name: row.name,
    scopes: fromJson<TokenScope[]>(row.scopes),
    models: row.models === null ? null : fromJson<string[]>(row.models),
    expiresAt: toIso(row.expires_at),
    createdAt: toIso(row.created_at)!,
    lastUsedAt: toIso(row.last_used_at),
    useCount: Number(row.use_count),
    revokedAt: toIso(row.revoked_at),
    hint: `${row.secret_hint}...`,
    owner,
  };
}

/**
 * Create a token for the signed-in person. The secret is returned once, here, and only its SHA-256 is stored.
 * A token acts for its owner: a `train` scope needs the owner to be a modeller.
 */
export async function createToken(actor: Actor, input: CreateTokenInput, conn: Knex = db()): Promise<TokenItem & { token: string }> {
  assertCan(actor, "tokens");
  if (input.scopes.includes("train") && !actor.roles.includes("modeller")) {
    throw new UnprocessableError('The "train" scope needs the modeller role.');
  }
  if (input.models) {
    const found: { slug: string }[] = await conn("models").select("slug").whereIn("slug", input.models);
    const missing = input.models.filter((slug) => !found.some((f) => f.slug === slug));
    if (missing.length > 0) throw new UnprocessableError(`There is no model ${missing.map((m) => `"${m}"`).join(", ")}.`);
  }
  const secret = TOKEN_PREFIX + randomBytes(SECRET_BYTES).toString("base64url");
  const [id] = await conn("api_tokens").insert({
    user_id: actor.userId,
    name: input.name,
    secret_sha256: hashSecret(secret),
    secret_hint: secret.slice(0, 10),
    scopes: JSON.stringify(TOKEN_SCOPES.filter((s) => input.scopes.includes(s))),
    models: input.models === null ? null : JSON.stringify([...new Set(input.models)]),
    expires_at: input.expiresAt === null ? null : new Date(input.expiresAt),
  });
  await recordAuditEvent({ ...auditedBy(actor), action: "token.create", subjectType: "api_token", subjectId: id, detail: { name: input.name, scopes: input.scopes } }, conn);
  const row: TokenRow = await conn("api_tokens").where({ id }).first();
  return { ...toItem(row, actor.email), token: secret };
}

export const TOKEN_STATES = ["active", "revoked", "expired"] as const;
export type TokenState = (typeof TOKEN_STATES)[number];

/** Narrowing a token list: by owner's e-mail, state at `now`, and a scope the token holds. */
export interface TokenFilter {
  owner?: string;
  state?: TokenState;
  scope?: TokenScope;
  now?: Date;
}

/** The actor's own tokens, or with `all` (admins only) everybody's, optionally filtered. */
export async function listTokens(actor: Actor, options: { all?: boolean } & TokenFilter = {}, conn: Knex = db()): Promise<TokenItem[]> {
  assertCan(actor, "tokens");
  if (options.all) assertCan(actor, "admin");
  const query = conn("api_tokens").join("users", "users.id", "api_tokens.user_id").select("api_tokens.*", "users.email as owner_email").orderBy("api_tokens.id");
  if (!options.all) query.where("api_tokens.user_id", actor.userId);
  if (options.owner) query.where("users.email", options.owner.trim().toLowerCase());
  const now = options.now ?? new Date();
  if (options.state === "revoked") query.whereNotNull("api_tokens.revoked_at");
  if (options.state === "expired") query.whereNull("api_tokens.revoked_at").where("api_tokens.expires_at", "<=", now);
  if (options.state === "active") query.whereNull("api_tokens.revoked_at").where((w) => w.whereNull("api_tokens.expires_at").orWhere("api_tokens.expires_at", ">", now));
  if (options.scope) query.whereRaw("JSON_CONTAINS(api_tokens.scopes, JSON_QUOTE(?))", [options.scope]);
  const rows: (TokenRow & { owner_email: string })[] = await query;
  return rows.map((row) => toItem(row, row.owner_email));
}

/** Revoke a token: its owner or an admin. It fails from the next request on. */
export async function revokeToken(actor: Actor, id: number, conn: Knex = db()): Promise<void> {
  assertCan(actor, "tokens");
  const row: TokenRow | undefined = await conn("api_tokens").where({ id }).first();
  if (!row || (row.user_id !== actor.userId && !can(actor, "admin"))) throw new NotFoundError(`There is no token ${id}.`);
  if (row.revoked_at === null) await conn("api_tokens").where({ id }).update({ revoked_at: conn.fn.now(3) });
  forgetCachedTokens({ tokenId: id });
  await recordAuditEvent({ ...auditedBy(actor), action: "token.revoke", subjectType: "api_token", subjectId: id }, conn);
}

/** Why a presented token is refused (the message the 401 carries). */
export type TokenRefusal = "malformed" | "unknown" | "revoked" | "expired" | "no-role" | "disabled";

/**
 * How long a checked token is trusted without asking the database again. Revocation in this process forgets it at
 * once (`forgetCachedTokens`); so do role changes and disabled accounts, which call it with the person's id.
 */
export const TOKEN_CACHE_MS = 5_000;

interface CachedToken {
  actor: Actor;
  expiresAt: number | null;
  checkedAt: number;
}

const holder = globalThis as typeof globalThis & { __stillpointTokenCache?: Map<string, CachedToken> };
function tokenCache(): Map<string, CachedToken> {
  holder.__stillpointTokenCache ??= new Map();
  return holder.__stillpointTokenCache;
}

/** Forget cached token checks: of one token, of one person's tokens, or all. */
export function forgetCachedTokens(which: { tokenId?: number; userId?: number } = {}): void {
  const cache = tokenCache();
  if (which.tokenId === undefined && which.userId === undefined) return cache.clear();
  for (const [hash, entry] of cache) {
    if (entry.actor.tokenId === which.tokenId || entry.actor.userId === which.userId) cache.delete(hash);
  }
}

/**
 * The actor a Bearer secret stands for, or why it is refused. The lookup is by the secret's SHA-256 (an index, so
 * its time does not depend on how much of a guess was right), and the stored hash is compared in constant time.
 * A token checked less than TOKEN_CACHE_MS ago is answered from memory (its expiry still checked against `now`);
 * its use is counted by `countTokenUse`.
 */
export async function authenticateToken(secret: string, now = new Date(), conn: Knex = db()): Promise<Actor | TokenRefusal> {
  if (!TOKEN_PATTERN.test(secret)) return "malformed";
  const hash = hashSecret(secret);
  const cache = tokenCache();
  const cached = cache.get(hash);
  if (cached && now.getTime() - cached.checkedAt < TOKEN_CACHE_MS) {
    if (cached.expiresAt !== null && cached.expiresAt <= now.getTime()) return "expired";
    countTokenUse(cached.actor.tokenId!, now);
    return cached.actor;
  }
  const row: (TokenRow & { email: string; owner_disabled_at: Date | null }) | undefined = await conn("api_tokens")
    .join("users", "users.id", "api_tokens.user_id")
    .select("api_tokens.*", "users.email", "users.disabled_at as owner_disabled_at")
    .where("api_tokens.secret_sha256", hash)
    .first();
  if (!row || !timingSafeEqual(Buffer.from(row.secret_sha256, "hex"), Buffer.from(hash, "hex"))) return "unknown";
  if (row.revoked_at !== null) return "revoked";
  if (row.owner_disabled_at !== null) return "disabled";
  if (row.expires_at !== null && new Date(row.expires_at).getTime() <= now.getTime()) return "expired";
  const roleRows: { role: string }[] = await conn("user_roles").select("role").where({ user_id: row.user_id });
  const roles = roleRows.map((r) => r.role).filter(isRole) as Role[];
  if (roles.length === 0) return "no-role";
  const actor: Actor = {
    userId: row.user_id,
    email: row.email,
    roles,
    via: "token",
    scopes: fromJson<TokenScope[]>(row.scopes),
    models: row.models === null ? null : fromJson<string[]>(row.models),
    tokenId: row.id,
  };
  if (cache.size > 10_000) cache.clear();
  cache.set(hash, { actor, expiresAt: row.expires_at === null ? null : new Date(row.expires_at).getTime(), checkedAt: now.getTime() });
  countTokenUse(row.id, now);
  return actor;
}

// ---- usage, counted in memory and written about once a second (not a database write per request) ----

interface UsageTally {
  uses: Map<number, { count: number; lastUsedAt: Date }>;
  evaluations: Map<string, { tokenId: number; versionId: number; day: string; requests: number; wavefronts: number; lastUsedAt: Date }>;
  timer: NodeJS.Timeout | null;
}
const usageHolder = globalThis as typeof globalThis & { __stillpointUsage?: UsageTally };
function tally(): UsageTally {
  usageHolder.__stillpointUsage ??= { uses: new Map(), evaluations: new Map(), timer: null };
  return usageHolder.__stillpointUsage;
}

/** How often counted usage reaches the database, ms. */
export const USAGE_FLUSH_MS = 1_000;

function scheduleFlush(): void {
  const t = tally();
  if (t.timer) return;
  t.timer = setTimeout(() => {
    t.timer = null;
    void flushTokenUsage().catch((error: Error) => console.error(`could not record token usage: ${error.message}`));
  }, USAGE_FLUSH_MS);
  t.timer.unref?.();
}

function countTokenUse(tokenId: number, now: Date): void {
  const entry = tally().uses.get(tokenId);
  if (entry) {
    entry.count += 1;
    entry.lastUsedAt = now;
  } else tally().uses.set(tokenId, { count: 1, lastUsedAt: now });
  scheduleFlush();
}

/** Count an evaluation of a version by a token (for the retirement notices). */
export function countEvaluation(tokenId: number, versionId: number, wavefronts: number, now = new Date()): void {
  const day = now.toISOString().slice(0, 10);
  const key = `${tokenId}:${versionId}:${day}`;
  const entry = tally().evaluations.get(key);
  if (entry) {
    entry.requests += 1;
    entry.wavefronts += wavefronts;
    entry.lastUsedAt = now;
  } else tally().evaluations.set(key, { tokenId, versionId, day, requests: 1, wavefronts, lastUsedAt: now });
  scheduleFlush();
}

/** Write the counted usage now (also called by tests and on shutdown). */
export async function flushTokenUsage(conn: Knex = db()): Promise<void> {
  const t = tally();
  const uses = [...t.uses.entries()];
  const evaluations = [...t.evaluations.values()];
  t.uses.clear();
  t.evaluations.clear();
  for (const [id, use] of uses) {
    await conn("api_tokens").where({ id }).update({ use_count: conn.raw("use_count + ?", [use.count]), last_used_at: use.lastUsedAt });
  }
  for (const e of evaluations) {
    await conn.raw(
      `INSERT INTO token_version_usage (token_id, version_id, day, requests, wavefronts, last_used_at) VALUES (?, ?, ?, ?, ?, ?)
       ON DUPLICATE KEY UPDATE requests = requests + VALUES(requests), wavefronts = wavefronts + VALUES(wavefronts), last_used_at = VALUES(last_used_at)`,
      [e.tokenId, e.versionId, e.day, e.requests, e.wavefronts, e.lastUsedAt],
    );
  }
}

// ---- who evaluated a version lately (the audience of a retirement notice) ----

/** How far back an evaluation makes a token's owner someone to tell when the version is retired. */
export const NOTICE_WINDOW_DAYS = 90;

/** The first UTC day inside the notice window ending at `now` (token_version_usage counts by UTC day). */
export function noticeWindowStart(now: Date): string {
  return new Date(now.getTime() - (NOTICE_WINDOW_DAYS - 1) * 86_400_000).toISOString().slice(0, 10);
}

export interface RecentVersionUser {
  userId: number;
  email: string;
  name: string;
  /** That person's tokens which evaluated the version in the window, by name. */
  tokens: string[];
}

/**
 * Every owner of a token that evaluated the version within the last NOTICE_WINDOW_DAYS days (counted per UTC day,
 * today included), with those tokens. Disabled or role-less owners are included: a notice costs nothing, and
 * their scripts may come back under another account.
 */
export async function recentVersionUsers(versionId: number, now = new Date(), conn: Knex = db()): Promise<RecentVersionUser[]> {
  const rows: { user_id: number; email: string; name: string; token_name: string }[] = await conn("token_version_usage")
    .join("api_tokens", "api_tokens.id", "token_version_usage.token_id")
    .join("users", "users.id", "api_tokens.user_id")
    .where("token_version_usage.version_id", versionId)
    .where("token_version_usage.day", ">=", noticeWindowStart(now))
    .distinct("users.id as user_id", "users.email", "users.name", "api_tokens.name as token_name")
    .orderBy(["users.email", "api_tokens.name"]);
  const byUser = new Map<number, RecentVersionUser>();
  for (const row of rows) {
    const entry = byUser.get(row.user_id) ?? { userId: row.user_id, email: row.email, name: row.name, tokens: [] };
    if (!entry.tokens.includes(row.token_name)) entry.tokens.push(row.token_name);
    byUser.set(row.user_id, entry);
  }
  return [...byUser.values()];
}

/** Per version id: how many tokens, of how many people, evaluated it within the notice window. */
export async function recentUsageByVersion(now = new Date(), conn: Knex = db()): Promise<Map<number, { tokens: number; people: number }>> {
  const rows: { version_id: number; tokens: number | string; people: number | string }[] = await conn("token_version_usage")
    .join("api_tokens", "api_tokens.id", "token_version_usage.token_id")
    .where("token_version_usage.day", ">=", noticeWindowStart(now))
    .groupBy("token_version_usage.version_id")
    .select("token_version_usage.version_id")
    .countDistinct({ tokens: "token_version_usage.token_id", people: "api_tokens.user_id" });
  return new Map(rows.map((r) => [r.version_id, { tokens: Number(r.tokens), people: Number(r.people) }]));
}
