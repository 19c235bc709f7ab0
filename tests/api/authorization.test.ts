import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Actor } from "@/lib/access/actor";
import { hashPassword } from "@/lib/auth/password";
import { closeDb, db } from "@/lib/db/knex";
import { createToken } from "@/lib/db/tokens";
import { createUser, getUser, setUserDisabled } from "@/lib/db/users";
import { sessionActor } from "@/lib/access/actor";
import { getCoefficientFile } from "@/lib/db/versions";
import { closeQueueClients } from "@/lib/queue/enqueue";
import { createTrainingRun } from "@/lib/registry/training";
import { VELORA_SETUP } from "@/lib/demo/velora";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";
import { actorFor, createTestModel, SMALL_SETUP, SMALL_ZERNIKE } from "../helpers/registry";
import { apiOperations } from "../helpers/routes";

/**
 * The authorisation matrix of the REST API: every operation found on disk under app/api/v1 (so a new route without a
 * rule here fails) x every kind of caller. Refusals are 401 or 403 problem details that carry nothing but the problem.
 */

type Permission = "public" | "identity" | "tokens" | "read" | "evaluate" | "train" | "train-or-admin" | "review" | "admin";
interface Rule {
  permission: Permission;
  /** Refused for a token limited to other models. */
  modelScoped: boolean;
  path: () => string;
  body?: () => unknown;
  raw?: () => { contentType: string; data: BodyInit };
}

let slug = "";
let otherSlug = "";
let runId = 0;
let stpm: Uint8Array = new Uint8Array();
let counter = 0;
const unique = () => `${process.pid}-${Date.now().toString(36)}-${counter++}`;

const RULES: Record<string, Rule> = {
  "GET /api/v1/me": { permission: "identity", modelScoped: false, path: () => "/api/v1/me" },
  "GET /api/v1/openapi.json": { permission: "public", modelScoped: false, path: () => "/api/v1/openapi.json" },
  "POST /api/v1/setups/check": { permission: "train", modelScoped: false, path: () => "/api/v1/setups/check", body: () => VELORA_SETUP },
  "POST /api/v1/tokens": { permission: "tokens", modelScoped: false, path: () => "/api/v1/tokens", body: () => ({ name: "matrix", scopes: ["read"], expiresAt: null, models: null }) },
  "GET /api/v1/tokens": { permission: "tokens", modelScoped: false, path: () => "/api/v1/tokens" },
  "DELETE /api/v1/tokens/{id}": { permission: "tokens", modelScoped: false, path: () => "/api/v1/tokens/999999999" },
  "GET /api/v1/setups": { permission: "read", modelScoped: false, path: () => "/api/v1/setups" },
  "POST /api/v1/setups": { permission: "train", modelScoped: false, path: () => "/api/v1/setups", body: () => ({ name: `matrix ${unique()}`, setup: SMALL_SETUP }) },
  "GET /api/v1/models": { permission: "read", modelScoped: false, path: () => "/api/v1/models" },
  // A token limited to some models may not create others.
  "POST /api/v1/models": { permission: "train", modelScoped: true, path: () => "/api/v1/models", body: () => ({ slug: `matrix-${unique()}`, name: "m", setupId: 1, zernike: SMALL_ZERNIKE }) },
  "GET /api/v1/models/{slug}": { permission: "read", modelScoped: true, path: () => `/api/v1/models/${slug}` },
  "GET /api/v1/models/{slug}/versions": { permission: "read", modelScoped: true, path: () => `/api/v1/models/${slug}/versions` },
  "POST /api/v1/models/{slug}/versions": {
    permission: "train", modelScoped: true, path: () => `/api/v1/models/${slug}/versions`,
    body: () => ({ order: 1, generatingSet: { design: "random", size: 20, maxRmsNm: 10, seed: 1 }, validationSet: null }),
  },
  "POST /api/v1/models/{slug}/versions/upload": {
    permission: "train", modelScoped: true, path: () => `/api/v1/models/${slug}/versions/upload`, raw: () => ({ contentType: "application/octet-stream", data: stpm as BodyInit }),
  },
  "GET /api/v1/models/{slug}/versions/{version}": { permission: "read", modelScoped: true, path: () => `/api/v1/models/${slug}/versions/1` },
  "GET /api/v1/models/{slug}/versions/{version}/coefficients": { permission: "read", modelScoped: true, path: () => `/api/v1/models/${slug}/versions/1/coefficients` },
  "POST /api/v1/models/{slug}/versions/{version}/submit": { permission: "train", modelScoped: true, path: () => `/api/v1/models/${slug}/versions/1/submit`, body: () => ({}) },
  // A reviewer's decision and an admin's retirement: sessions only. The draft is not in review: 409 for those allowed.
  "POST /api/v1/models/{slug}/versions/{version}/review": {
    permission: "review", modelScoped: true, path: () => `/api/v1/models/${slug}/versions/1/review`, body: () => ({ decision: "return", comment: "matrix" }),
  },
  "POST /api/v1/models/{slug}/versions/{version}/retire": {
    permission: "admin", modelScoped: true, path: () => `/api/v1/models/${slug}/versions/1/retire`,
    body: () => ({ reason: "matrix", sunsetAt: "2099-01-01T00:00:00Z", successorVersion: null }),
  },
  "POST /api/v1/models/{slug}/versions/{version}/evaluate": {
    permission: "evaluate", modelScoped: true, path: () => "/api/v1/models/velora-transmit/versions/2/evaluate",
    body: () => ({ wavefronts: [{ ordering: "noll", coefficientsNm: { "4": 1 } }], output: "summary" }),
  },
  "POST /api/v1/models/{slug}/versions/{version}/exact": {
    permission: "evaluate", modelScoped: true, path: () => "/api/v1/models/velora-transmit/versions/2/exact",
    body: () => ({ wavefront: { ordering: "noll", coefficientsNm: { "4": 1 } } }),
  },
  // Analysis of a version: read scope or any signed-in person (the demo's released version); pruning: modeller / train.
  "POST /api/v1/models/{slug}/versions/{version}/worst-case": {
    permission: "read", modelScoped: true, path: () => "/api/v1/models/velora-transmit/versions/2/worst-case", body: () => ({ budgetRmsNm: 30, jitterNrad: 8 }),
  },
  "POST /api/v1/models/{slug}/versions/{version}/requirements": {
    permission: "read", modelScoped: true, path: () => "/api/v1/models/velora-transmit/versions/2/requirements",
    body: () => ({ ttlBudgetPmPerNrad: 0.1, budgetRmsNm: 30, samples: 1024, seed: 3 }),
  },
  "POST /api/v1/models/{slug}/versions/{version}/modes": { permission: "read", modelScoped: true, path: () => "/api/v1/models/velora-transmit/versions/2/modes", body: () => ({}) },
  "POST /api/v1/models/{slug}/versions/{version}/correction": {
    permission: "read", modelScoped: true, path: () => "/api/v1/models/velora-transmit/versions/2/correction",
    body: () => ({ wavefront: { ordering: "noll", coefficientsNm: { "4": 5 } }, adjustable: { ordering: "noll", indices: [4] }, limitNm: 10 }),
  },
  "POST /api/v1/models/{slug}/versions/{version}/noise": {
    permission: "read", modelScoped: true, path: () => "/api/v1/models/velora-transmit/versions/2/noise",
    body: () => ({ wavefront: { ordering: "noll", coefficientsNm: { "4": 5 } }, offsetNrad: null, jitterAsd: [[0.001, 10], [1, 1]], allocation: [[0.0001, 1], [10, 1]] }),
  },
  "POST /api/v1/wavefronts/fit": {
    permission: "read", modelScoped: false, path: () => "/api/v1/wavefronts/fit",
    raw: () => {
      const form = new FormData();
      form.set("file", new Blob([new Uint8Array([1, 2, 3])]), "not.npz");
      return { contentType: "", data: form };
    },
  },
  "POST /api/v1/models/{slug}/versions/{version}/prune": {
    permission: "train", modelScoped: true, path: () => `/api/v1/models/${slug}/versions/1/prune`, body: () => ({ budgetRmsNm: 10, jitterNrad: 8, thresholdPm: 0.1 }),
  },
  "POST /api/v1/models/{slug}/generating-sets": {
    permission: "train", modelScoped: true, path: () => `/api/v1/models/${slug}/generating-sets`,
    raw: () => {
      const form = new FormData();
      form.set("file", new Blob([new Uint8Array([1, 2, 3])]), "not.npz");
      return { contentType: "", data: form };
    },
  },
  "GET /api/v1/models/{slug}/generating-sets": { permission: "read", modelScoped: true, path: () => `/api/v1/models/${slug}/generating-sets` },
  "GET /api/v1/runs": { permission: "read", modelScoped: false, path: () => "/api/v1/runs" },
  "GET /api/v1/runs/{id}": { permission: "read", modelScoped: true, path: () => `/api/v1/runs/${runId}` },
  // Its creator (the demo modeller owns these tokens and queued the run) or an admin.
  "POST /api/v1/runs/{id}/cancel": { permission: "train-or-admin", modelScoped: true, path: () => `/api/v1/runs/${runId}/cancel`, body: () => ({}) },
};

type Caller =
  | { kind: "anonymous" }
  | { kind: "header"; value: string; label: string }
  | { kind: "token"; label: string; scopes: string[]; models?: "other"; state?: "expired" | "revoked" | "no-role" | "disabled" }
  | { kind: "session"; role: "viewer" | "modeller" | "reviewer" | "admin" }
  | { kind: "disabled-session"; label: string };

const CALLERS: Caller[] = [
  { kind: "anonymous" },
  { kind: "header", label: "malformed header", value: "Basic dXNlcjpwYXNz" },
  { kind: "header", label: "unknown token", value: `Bearer stp_${"Q".repeat(43)}` },
  { kind: "token", label: "expired token", scopes: ["read", "evaluate", "train"], state: "expired" },
  { kind: "token", label: "revoked token", scopes: ["read", "evaluate", "train"], state: "revoked" },
  { kind: "token", label: "token whose owner lost the role", scopes: ["read", "evaluate"], state: "no-role" },
  { kind: "token", label: "token with the read scope only", scopes: ["read"] },
  { kind: "token", label: "token with the evaluate scope only", scopes: ["evaluate"] },
  { kind: "token", label: "token limited to another model", scopes: ["read", "evaluate", "train"], models: "other" },
  { kind: "token", label: "modeller's token with every scope", scopes: ["read", "evaluate", "train"] },
  { kind: "session", role: "viewer" },
  { kind: "session", role: "modeller" },
  { kind: "session", role: "reviewer" },
  { kind: "session", role: "admin" },
  // Account safety: a modeller signed in (and holding a token) before an admin disabled the account.
  { kind: "disabled-session", label: "session of a disabled account" },
  { kind: "token", label: "token of a disabled account", scopes: ["read", "evaluate", "train"], state: "disabled" },
];

const label = (c: Caller) => (c.kind === "anonymous" ? "no credentials" : c.kind === "session" ? `${c.role} session` : c.label);
let disabledAgent: ReturnType<AppServer["agent"]> | undefined;

/** 401, 403, or "allowed" (anything but 401/403 and never 5xx). */
function expected(rule: Rule, caller: Caller): 401 | 403 | "allowed" {
  if (rule.permission === "public") return "allowed";
  if (caller.kind === "anonymous" || caller.kind === "header" || caller.kind === "disabled-session") return 401;
  if (caller.kind === "token") {
    if (caller.state) return 401;
    if (rule.permission === "identity") return "allowed";
    if (rule.permission === "tokens" || rule.permission === "review" || rule.permission === "admin") return 403; // session only
    const scope = rule.permission === "train-or-admin" ? "train" : rule.permission;
    if (!caller.scopes.includes(scope)) return 403;
    if (caller.models === "other" && rule.modelScoped) return 403;
    return "allowed"; // the demo modeller owns these tokens
  }
  if (rule.permission === "train") return caller.role === "modeller" ? "allowed" : 403;
  if (rule.permission === "review") return caller.role === "reviewer" ? "allowed" : 403;
  if (rule.permission === "admin") return caller.role === "admin" ? "allowed" : 403;
  if (rule.permission === "train-or-admin") return caller.role === "modeller" || caller.role === "admin" ? "allowed" : 403;
  return "allowed";
}

let server: AppServer;
const sessions = new Map<string, ReturnType<AppServer["agent"]>>();
const tokens = new Map<string, string>();

beforeAll(async () => {
  server = await startAppServer();
  const modeller = await actorFor("modeller@velora.test");
  slug = await createTestModel(modeller);
  otherSlug = await createTestModel(modeller);
  const run = await createTrainingRun(modeller, slug, { order: 1, generatingSet: { design: "random", size: 20, maxRmsNm: 10, seed: 2 }, validationSet: null });
  runId = run.id;
  // A version 1 to read: the demo v4 file would not fit this model's setup, so wait for the run (any test worker
  // may take it) or, without one, leave the version routes answering 404, which is still "allowed".
  for (let i = 0; i < 200; i++) {
    const state: { state: string } = await db()("runs").select("state").where({ id: runId }).first();
    if (state.state === "succeeded") break;
    await new Promise((resolve) => setTimeout(resolve, 50));
  }
  try {
    stpm = (await getCoefficientFile(modeller, slug, 1)).bytes;
  } catch {
    stpm = new Uint8Array([0x53, 0x54]);
  }
  for (const role of ["viewer", "modeller", "reviewer", "admin"] as const) {
    const agent = server.agent();
    await signIn(agent, `${role}@velora.test`, DEMO_PASSWORD);
    sessions.set(role, agent);
  }
  // A person who will lose every role while their token still exists.
  const leaverId = await createUser({ email: `leaver-${unique()}@velora.test`, name: "Leaver", passwordHash: await hashPassword("x".repeat(12)), roles: ["viewer"] });
  const leaver: Actor = sessionActor((await getUser(leaverId))!);
  // A modeller who signs in and creates a token, then is disabled.
  const disabledPassword = "disabled-matrix-password";
  const disabledEmail = `disabled-${unique()}@velora.test`;
  const disabledId = await createUser({ email: disabledEmail, name: "Disabled", passwordHash: await hashPassword(disabledPassword), roles: ["viewer", "modeller"] });
  const disabledPerson: Actor = sessionActor((await getUser(disabledId))!);
  disabledAgent = server.agent();
  await signIn(disabledAgent, disabledEmail, disabledPassword);
  for (const caller of CALLERS) {
    if (caller.kind !== "token") continue;
    const owner = caller.state === "no-role" ? leaver : caller.state === "disabled" ? disabledPerson : modeller;
    const created = await createToken(owner, {
      name: caller.label, scopes: caller.scopes as ("read" | "evaluate" | "train")[],
      expiresAt: caller.state === "expired" ? new Date(Date.now() + 1500).toISOString() : null,
      models: caller.models === "other" ? [otherSlug] : null,
    });
    if (caller.state === "revoked") await db()("api_tokens").where({ id: created.id }).update({ revoked_at: db().fn.now(3) });
    tokens.set(caller.label, created.token);
  }
  await db()("user_roles").where({ user_id: leaverId }).delete();
  await setUserDisabled(disabledId, true);
  await new Promise((resolve) => setTimeout(resolve, 1600)); // the short-lived token expires
});

afterAll(async () => {
  await server?.close();
  await closeQueueClients();
  await closeDb();
});

describe("the authorisation matrix of /api/v1", () => {
  const found = apiOperations();

  it("has a rule for every operation on disk, and no rule for one that is gone", () => {
    expect(Object.keys(RULES).sort()).toEqual(found);
  });

  const cases = found.flatMap((op) => CALLERS.map((caller) => [op, label(caller), caller] as const));
  it.each(cases)("%s by %s", async (op, _label, caller) => {
    const rule = RULES[op];
    if (!rule) throw new Error(`no rule for ${op}`);
    const method = op.split(" ")[0];
    const raw = rule.raw?.();
    const body = rule.body?.();
    const headers: Record<string, string> = {};
    if (body !== undefined) headers["content-type"] = "application/json";
    if (raw?.contentType) headers["content-type"] = raw.contentType;
    let status: number;
    let text: string;
    let contentType: string;
    if (caller.kind === "session" || caller.kind === "disabled-session") {
      const agent = caller.kind === "session" ? sessions.get(caller.role)! : disabledAgent!;
      let request = agent[method.toLowerCase() as "get"](rule.path());
      for (const [k, v] of Object.entries(headers)) request = request.set(k, v);
      if (raw && raw.data instanceof FormData) request = request.attach("file", Buffer.from([1, 2, 3]), "not.npz");
      else if (raw) request = request.send(Buffer.from(raw.data as Uint8Array));
      else if (body !== undefined) request = request.send(body as object);
      const response = await request.buffer(true).parse((res, callback) => {
        let data = "";
        res.on("data", (chunk: Buffer) => (data += chunk.toString("latin1")));
        res.on("end", () => callback(null, data));
      });
      status = response.status;
      text = response.body as string;
      contentType = response.headers["content-type"] ?? "";
    } else {
      if (caller.kind === "header") headers.authorization = caller.value;
      if (caller.kind === "token") headers.authorization = `Bearer ${tokens.get(caller.label)}`;
      const response = await fetch(`${server.baseUrl}${rule.path()}`, {
        method,
        headers,
        body: raw ? raw.data : body === undefined ? undefined : JSON.stringify(body),
      });
      status = response.status;
      text = await response.text();
      contentType = response.headers.get("content-type") ?? "";
    }
    const want = expected(rule, caller);
    expect(status).toBeLessThan(500);
    if (want === "allowed") {
      expect([401, 403]).not.toContain(status);
    } else {
      expect(status).toBe(want);
      expect(contentType).toContain("application/problem+json");
      const problem = JSON.parse(text) as Record<string, unknown>;
      // Nothing but the problem itself: no model, version, coefficient or token data in a refusal.
      expect(Object.keys(problem).every((k) => ["type", "title", "status", "detail", "instance"].includes(k))).toBe(true);
      expect(text).not.toMatch(/coefficientsSha256|"terms"|"setup"|stp_[A-Za-z0-9_-]{20}/);
    }
  });
});
