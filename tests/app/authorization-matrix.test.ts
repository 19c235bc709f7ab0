import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { NAV_ITEMS } from "@/components/navigation";
import type { Role } from "@/lib/access/roles";
import { closeDb, db } from "@/lib/db/knex";
import { loadModel } from "@/lib/db/models";
import { insertRun } from "@/lib/db/runs";
import { setUserDisabled } from "@/lib/db/users";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";
import { createTestPerson } from "../helpers/people";
import { actorFor, createTestModel } from "../helpers/registry";
import { appPages, serverActions } from "../helpers/routes";
import { actionId, callAction, callFormAction } from "../helpers/server-actions";

/**
 * The authorisation matrix of the pages and the server actions: every page.tsx and every exported function of every
 * "use server" actions.ts found on disk under app/ (so a new page or action without a rule here fails) x every kind
 * of caller: signed out, each role, and a modeller whose account was disabled after signing in.
 * The REST API's matrix is tests/api/authorization.test.ts.
 */

// The mailbox page exists in a development start only (npm start sets MAILBOX_PAGE=1); set before the config is read.
process.env.MAILBOX_PAGE = "1";

type Agent = ReturnType<AppServer["agent"]>;
const ROLES = ["viewer", "modeller", "reviewer", "admin"] as const satisfies readonly Role[];
type Caller = { kind: "signed-out" } | { kind: "role"; role: (typeof ROLES)[number] } | { kind: "disabled" };
const CALLERS: Caller[] = [{ kind: "signed-out" }, ...ROLES.map((role) => ({ kind: "role", role }) as const), { kind: "disabled" }];
const label = (c: Caller) => (c.kind === "role" ? `${c.role} session` : c.kind === "signed-out" ? "signed out" : "session of a disabled account");

// The boundaries' own text is in every page's flight data (the layouts carry them), so a refusal is told by the
// framework's digest of forbidden() (a 403 status, or in the streamed workspace the digest where the page would be).
const FORBIDDEN_DIGEST = "NEXT_HTTP_ERROR_FALLBACK;403";
const NOT_FOUND_DIGEST = "NEXT_HTTP_ERROR_FALLBACK;404";
const FORBIDDEN_TEXT = "Your roles do not include access to this page.";
const decode = (html: string) => html.replaceAll("&#x27;", "'").replaceAll("&quot;", '"').replaceAll("&amp;", "&").replaceAll("<!-- -->", "");

let server: AppServer;
const agents = new Map<string, Agent>();
let runId = 0;
let modelSlug = "";
let modelId = 0;
let modellerId = 0;
const extraRuns: number[] = [];

// ---------------------------------------------------------------------------------------------------------------
// Pages

/**
 * Who may see a page: the roles that get it (others get the forbidden page), or "public" (no session needed: what a
 * signed-out visitor then reads).
 */
type PageRule = { roles: readonly Role[] } | { roles: "public"; shows: RegExp };
const ALL_ROLES: readonly Role[] = ROLES;

/**
 * Pages in the navigation take their roles from components/navigation.ts (the one list the menu and the pages share);
 * the others are listed here. A page that is in neither fails the first test.
 */
const OFF_MENU_PAGES: Record<string, PageRule> = {
  "/sign-in": { roles: "public", shows: /name="password"/ },
  "/models/new": { roles: ["modeller"] },
  "/setups/new": { roles: ["modeller"] },
  "/models/[slug]": { roles: ALL_ROLES },
  "/models/[slug]/versions/new": { roles: ["modeller"] },
  "/models/[slug]/versions/[version]": { roles: ALL_ROLES },
  "/models/[slug]/versions/[version]/playground": { roles: ALL_ROLES },
  "/runs/[id]": { roles: ALL_ROLES },
  "/models/[slug]/compare": { roles: ALL_ROLES },
  "/models/[slug]/versions/[version]/terms": { roles: ALL_ROLES },
  "/models/[slug]/versions/[version]/analysis": { roles: ALL_ROLES },
  // The link's secret is the credential; an unknown one is refused on the page itself.
  "/invite/[secret]": { roles: "public", shows: /data-testid="invitation-refused"/ },
};
const PAGE_RULES: Record<string, PageRule> = {
  ...Object.fromEntries(NAV_ITEMS.map((item) => [item.href, { roles: item.roles }])),
  ...OFF_MENU_PAGES,
};

/** A page pattern with its dynamic segments filled by demo values (the released demo version, a run made here). */
function pagePath(pattern: string): string {
  return pattern.replace(/\[([^\]]+)\]/g, (_, name: string) => {
    if (name === "slug") return "velora-transmit";
    if (name === "version") return "2";
    if (name === "id") return String(runId);
    if (name === "secret") return "no-such-invitation-link";
    throw new Error(`no demo value for the segment [${name}] of ${pattern}: add one to pagePath`);
  });
}

// ---------------------------------------------------------------------------------------------------------------
// Server actions

interface ActionRule {
  /** Roles the action lets through its permission check, or "public" (anybody, signed in or not). */
  roles: readonly Role[] | "public";
  /** The page it is called from (the proxy stands in front of it). */
  page: () => string;
  /** Arguments that pass the permission check's inputs but fail validation after it (or act on a row made here). */
  args: () => Promise<unknown[]> | unknown[];
  /** A form's action (the previous state first, then a FormData, sent empty: every field is missing). */
  form?: true;
  /** What a refused role reads. */
  refusal: RegExp;
  /** What an allowed caller reads: the validation message, or the result on the row made for it. */
  allowed: RegExp;
}

const NOT_MODELLER = /This needs the modeller role\./;
const NOT_ADMIN = /This needs the admin role\./;
const ACTION_RULES: Record<string, ActionRule> = {
  "app/(workspace)/account/actions.ts#updateProfile": {
    roles: ALL_ROLES, page: () => "/account", args: () => [{ status: "idle" }], form: true, refusal: /$^/, allowed: /"status":"invalid","message":"Invalid input: expected string, received null"/,
  },
  "app/(workspace)/account/actions.ts#changePassword": {
    roles: ALL_ROLES, page: () => "/account", args: () => [{ status: "idle" }], form: true,
    refusal: /$^/, allowed: /The password was not changed\./,
  },
  "app/(workspace)/models/[slug]/versions/[version]/actions.ts#submitForReviewAction": {
    roles: ["modeller"], page: () => "/models/velora-transmit/versions/4", args: () => ["velora-transmit", "four"], refusal: NOT_MODELLER, allowed: /version must be an integer/,
  },
  "app/(workspace)/models/[slug]/versions/[version]/actions.ts#reviewVersionAction": {
    roles: ["reviewer"], page: () => "/models/velora-transmit/versions/3", args: () => ["velora-transmit", "three", {}],
    refusal: /This needs the reviewer role\./, allowed: /version must be an integer/,
  },
  "app/(workspace)/models/[slug]/versions/new/actions.ts#queueTrainingAction": {
    roles: ["modeller"], page: () => `/models/${modelSlug}/versions/new`, args: () => [modelSlug, {}], refusal: NOT_MODELLER, allowed: /"fieldErrors":\{"[a-zA-Z]/,
  },
  "app/(workspace)/models/new/actions.ts#createModelAction": {
    roles: ["modeller"], page: () => "/models/new", args: () => [{}], refusal: NOT_MODELLER, allowed: /"fieldErrors":\{"[a-zA-Z]/,
  },
  "app/(workspace)/setups/new/actions.ts#createSetupAction": {
    roles: ["modeller"], page: () => "/setups/new", args: () => [{}], refusal: NOT_MODELLER, allowed: /"fieldErrors":\{"[a-zA-Z]/,
  },
  // Its creator (the demo modeller queued each of these runs) or an admin: a fresh queued run per call.
  "app/(workspace)/runs/[id]/actions.ts#cancelRunAction": {
    roles: ["modeller", "admin"], page: () => `/runs/${runId}`,
    args: async () => {
      const id = await insertRun({ kind: "training", modelId, spec: {}, total: 10, createdBy: modellerId });
      extraRuns.push(id);
      return [id];
    },
    refusal: /Only the modeller who queued this run \(with the train scope\) or an admin may cancel it\./, allowed: /"ok":true,"data":\{"state":"cancelled"\}/,
  },
  "app/(workspace)/tokens/actions.ts#createTokenAction": {
    roles: ALL_ROLES, page: () => "/tokens", args: () => [{}], refusal: /$^/, allowed: /"fieldErrors":\{"[a-zA-Z]/,
  },
  "app/(workspace)/tokens/actions.ts#revokeTokenAction": {
    roles: ALL_ROLES, page: () => "/tokens", args: () => ["one"], refusal: /$^/, allowed: /token id must be an integer/,
  },
  "app/(admin)/people/actions.ts#inviteAction": {
    roles: ["admin"], page: () => "/people", args: () => [{}], refusal: NOT_ADMIN, allowed: /"fieldErrors":\{"[a-zA-Z]/,
  },
  "app/(admin)/people/actions.ts#withdrawInvitationAction": {
    roles: ["admin"], page: () => "/people", args: () => ["one"], refusal: NOT_ADMIN, allowed: /id must be an integer/,
  },
  "app/(admin)/people/actions.ts#setRolesAction": {
    roles: ["admin"], page: () => "/people", args: () => [{}], refusal: NOT_ADMIN, allowed: /"fieldErrors":\{"[a-zA-Z]/,
  },
  "app/(admin)/people/actions.ts#disableAccountAction": {
    roles: ["admin"], page: () => "/people", args: () => ["one"], refusal: NOT_ADMIN, allowed: /id must be an integer/,
  },
  "app/(admin)/people/actions.ts#enableAccountAction": {
    roles: ["admin"], page: () => "/people", args: () => ["one"], refusal: NOT_ADMIN, allowed: /id must be an integer/,
  },
  "app/(admin)/versions/actions.ts#retireVersionAction": {
    roles: ["admin"], page: () => "/versions", args: () => ["velora-transmit", "two", {}], refusal: NOT_ADMIN, allowed: /version must be an integer/,
  },
  // The link's secret is the credential: no session needed. Fields that fail validation before the link is looked up.
  "app/(auth)/invite/[secret]/actions.ts#acceptInvitationAction": {
    roles: "public", page: () => "/invite/no-such-invitation-link", args: () => ["no-such-invitation-link", {}], refusal: /$^/, allowed: /"fieldErrors":\{"[a-zA-Z]/,
  },
};

// ---------------------------------------------------------------------------------------------------------------

beforeAll(async () => {
  server = await startAppServer();
  const modeller = await actorFor("modeller@velora.test");
  modellerId = modeller.userId;
  modelSlug = await createTestModel(modeller);
  modelId = (await loadModel(modelSlug))!.id;
  runId = await insertRun({ kind: "training", modelId, spec: {}, total: 10, createdBy: modeller.userId });
  await db()("runs").where({ id: runId }).update({ state: "cancelled" }); // a run to look at, that no worker takes
  for (const role of ROLES) {
    const agent = server.agent();
    await signIn(agent, `${role}@velora.test`, DEMO_PASSWORD);
    agents.set(role, agent);
  }
  agents.set("signed-out", server.agent());
  // A modeller who signed in, then was disabled by an admin.
  const disabled = await createTestPerson(["viewer", "modeller"], "disabled-matrix");
  const disabledAgent = server.agent();
  await signIn(disabledAgent, disabled.email, DEMO_PASSWORD);
  await disabledAgent.get("/api/v1/me").expect(200);
  await setUserDisabled(disabled.id, true);
  agents.set("disabled", disabledAgent);
});

afterAll(async () => {
  if (extraRuns.length > 0) await db()("runs").whereIn("id", extraRuns).update({ state: "cancelled" });
  await server?.close();
  await closeDb();
});

const agentOf = (caller: Caller) => agents.get(caller.kind === "role" ? caller.role : caller.kind)!;

describe("the authorisation matrix of the pages", () => {
  const found = appPages();

  it("has a rule for every page on disk, and no rule for one that is gone", () => {
    expect(Object.keys(PAGE_RULES).sort()).toEqual(found);
  });

  it("lists no page both in the navigation and here", () => {
    expect(NAV_ITEMS.filter((item) => item.href in OFF_MENU_PAGES)).toEqual([]);
  });

  const cases = found.flatMap((pattern) => CALLERS.map((caller) => [pattern, label(caller), caller] as const));
  it.each(cases)("%s for %s", async (pattern, _label, caller) => {
    const rule = PAGE_RULES[pattern];
    if (!rule) throw new Error(`no rule for the page ${pattern}`);
    const path = pagePath(pattern);
    const response = await agentOf(caller).get(path).redirects(0);
    const html = decode(response.text ?? "");
    expect(response.status).toBeLessThan(500);
    if (rule.roles === "public") {
      if (caller.kind === "signed-out") {
        expect(response.status).toBe(200);
        expect(html).toMatch(rule.shows);
      }
      return;
    }
    if (caller.kind !== "role") {
      // The proxy sends a visitor without a session to sign in; the layout does the same for a disabled account.
      expect(response.status).toBe(307);
      const location = new URL(response.headers.location, server.baseUrl);
      expect(location.pathname).toBe("/sign-in");
      if (caller.kind === "signed-out") expect(location.searchParams.get("callbackUrl")).toBe(path);
      return;
    }
    if (rule.roles.includes(caller.role)) {
      expect(response.status).toBe(200);
      expect(html).not.toContain(FORBIDDEN_DIGEST);
      expect(html).not.toContain(NOT_FOUND_DIGEST);
    } else {
      // The workspace streams behind its loading state, so its forbidden page arrives as content with a 200.
      expect([200, 403]).toContain(response.status);
      expect(response.status === 403 || html.includes(FORBIDDEN_DIGEST)).toBe(true);
      expect(html).toContain(FORBIDDEN_TEXT);
    }
  });
});

describe("the authorisation matrix of the server actions", () => {
  const found = serverActions();

  it("has a rule for every exported action on disk, and no rule for one that is gone", () => {
    expect(Object.keys(ACTION_RULES).sort()).toEqual(found);
  });

  const cases = found.flatMap((key) => CALLERS.map((caller) => [key, label(caller), caller] as const));
  it.each(cases)("%s by %s", async (key, _label, caller) => {
    const rule = ACTION_RULES[key];
    if (!rule) throw new Error(`no rule for the server action ${key}`);
    const [file, name] = key.split("#") as [string, string];
    const id = actionId(file, name);
    const args = await rule.args();
    const agent = agentOf(caller);
    const answer = rule.form ? await callFormAction(agent, rule.page(), id, args) : await callAction(agent, rule.page(), id, args);
    expect(answer.text).not.toContain('"ok":true,"data":{"id"'); // nothing created
    if (rule.roles === "public") {
      expect(answer.status).toBe(200);
      expect(answer.text).toMatch(rule.allowed);
      return;
    }
    if (caller.kind === "signed-out") {
      // The proxy answers first: the action never runs.
      expect(answer.status).toBe(307);
      expect(new URL(answer.location!, server.baseUrl).pathname).toBe("/sign-in");
      return;
    }
    expect(answer.status).toBeLessThan(500);
    if (caller.kind === "disabled") {
      expect(answer.text).toContain("Sign in to use this resource.");
      expect(answer.text).not.toMatch(rule.allowed);
      return;
    }
    expect(answer.status).toBe(200);
    if (rule.roles.includes(caller.role)) {
      expect(answer.text).toMatch(rule.allowed);
      expect(answer.text).not.toContain("Sign in to use this resource.");
    } else {
      expect(answer.text).toMatch(rule.refusal);
      expect(answer.text).not.toMatch(rule.allowed);
      expect(answer.text).not.toContain('"ok":true');
    }
  });
});
