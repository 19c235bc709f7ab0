import { afterAll, beforeEach, describe, expect, it, vi } from "vitest";
import { closeDb, db } from "@/lib/db/knex";
import { loadModel } from "@/lib/db/models";
import { insertRun } from "@/lib/db/runs";
import { VELORA_SETUP } from "@/lib/demo/velora";
import { actorFor, createTestModel } from "../helpers/registry";
import { testDatabaseName } from "../helpers/test-database";

// The registry's server actions called as plain functions, with the session next-auth would read replaced by the one
// each test sets: no proxy and no page stand in front, so every refusal here is the action's own. (The framework's
// request path, with a viewer's session, is covered by pages-actions.test.ts against the production build.)

let session: { user: { id: number } } | null = null;
vi.mock("next-auth", async (importOriginal) => ({
  ...(await importOriginal<typeof import("next-auth")>()),
  getServerSession: vi.fn(async () => session),
}));
vi.mock("next/cache", () => ({ revalidatePath: vi.fn() }));

const { createSetupAction } = await import("@/app/(workspace)/setups/new/actions");
const { createModelAction } = await import("@/app/(workspace)/models/new/actions");
const { queueTrainingAction } = await import("@/app/(workspace)/models/[slug]/versions/new/actions");
const { submitForReviewAction } = await import("@/app/(workspace)/models/[slug]/versions/[version]/actions");
const { cancelRunAction } = await import("@/app/(workspace)/runs/[id]/actions");
const { createTokenAction } = await import("@/app/(workspace)/tokens/actions");

testDatabaseName();
const tag = `${process.pid}-${Date.now().toString(36)}`;

async function signInAs(email: string | null) {
  session = email === null ? null : { user: { id: (await actorFor(email)).userId } };
}

const SIGNED_OUT = { ok: false, formError: "Sign in to use this resource.", fieldErrors: {} };
const NOT_MODELLER = { ok: false, formError: "This needs the modeller role.", fieldErrors: {} };

beforeEach(() => {
  session = null;
});

afterAll(async () => {
  await closeDb();
});

describe("registry server actions, with no proxy in front", () => {
  it("createSetupAction refuses a signed-out caller and a viewer, and stores a modeller's setup", async () => {
    const name = `direct setup ${tag}`;
    const input = { name, setup: VELORA_SETUP };
    await signInAs(null);
    expect(await createSetupAction(input)).toEqual(SIGNED_OUT);
    await signInAs("viewer@velora.test");
    expect(await createSetupAction(input)).toEqual(NOT_MODELLER);
    expect(await db()("setups").where({ name }).first()).toBeUndefined();

    await signInAs("modeller@velora.test");
    const stored = await createSetupAction(input);
    expect(stored.ok).toBe(true);
    const row: { id: number } = await db()("setups").where({ name }).first();
    expect(stored).toEqual({ ok: true, data: { id: row.id, next: `/models/new?setupId=${row.id}` } });
    expect(await createSetupAction(input)).toEqual({ ok: false, formError: null, fieldErrors: { name: `A setup named "${name}" exists already.` } });
  });

  it("createModelAction refuses a signed-out caller and a viewer", async () => {
    const slug = `direct-${tag}`;
    const setup: { id: number } = await db()("setups").first();
    const input = { slug, name: "Direct", description: null, setupId: setup.id, zernike: { ordering: "noll", indices: [4, 5, 6] } };
    await signInAs(null);
    expect(await createModelAction(input)).toEqual(SIGNED_OUT);
    await signInAs("viewer@velora.test");
    expect(await createModelAction(input)).toEqual(NOT_MODELLER);
    expect(await db()("models").where({ slug }).first()).toBeUndefined();
  });

  it("queueTrainingAction refuses a signed-out caller and a viewer, before reading the request", async () => {
    const slug = await createTestModel(await actorFor("modeller@velora.test"));
    const model = (await loadModel(slug))!;
    const input = { order: 1, generatingSet: { design: "random", size: 20, maxRmsNm: 10, seed: 1 }, validationSet: null };
    await signInAs(null);
    expect(await queueTrainingAction(slug, input)).toEqual(SIGNED_OUT);
    await signInAs("viewer@velora.test");
    expect(await queueTrainingAction(slug, input)).toEqual(NOT_MODELLER);
    // A malformed request from a viewer is refused for the role, not answered with field messages.
    expect(await queueTrainingAction(slug, { order: 3 })).toEqual(NOT_MODELLER);
    expect(await db()("runs").where({ model_id: model.id }).first()).toBeUndefined();
  });

  it("submitForReviewAction refuses a signed-out caller, a viewer and a reviewer; version 4 stays a draft", async () => {
    await signInAs(null);
    expect(await submitForReviewAction("velora-transmit", 4)).toEqual(SIGNED_OUT);
    await signInAs("viewer@velora.test");
    expect(await submitForReviewAction("velora-transmit", 4)).toEqual(NOT_MODELLER);
    await signInAs("reviewer@velora.test");
    expect(await submitForReviewAction("velora-transmit", 4)).toEqual(NOT_MODELLER);
    const model = (await loadModel("velora-transmit"))!;
    const v4: { state: string } = await db()("model_versions").where({ model_id: model.id, version: 4 }).first();
    expect(v4.state).toBe("draft");
  });

  it("cancelRunAction refuses a signed-out caller and a viewer; the run stays queued", async () => {
    const modeller = await actorFor("modeller@velora.test");
    const slug = await createTestModel(modeller);
    const model = (await loadModel(slug))!;
    const runId = await insertRun({ kind: "training", modelId: model.id, spec: {}, total: 10, createdBy: modeller.userId });
    await signInAs(null);
    expect(await cancelRunAction(runId)).toEqual(SIGNED_OUT);
    await signInAs("viewer@velora.test");
    expect(await cancelRunAction(runId)).toEqual({ ok: false, formError: "Only the modeller who queued this run (with the train scope) or an admin may cancel it.", fieldErrors: {} });
    expect(((await db()("runs").where({ id: runId }).first()) as { state: string }).state).toBe("queued");
    await signInAs("modeller@velora.test");
    expect(await cancelRunAction(runId)).toEqual({ ok: true, data: { state: "cancelled" } });
  });

  it("createTokenAction refuses a signed-out caller, and a train scope to a viewer", async () => {
    const name = `direct-token-${tag}`;
    await signInAs(null);
    expect(await createTokenAction({ name, scopes: ["read"], expiresAt: null, models: null })).toEqual(SIGNED_OUT);
    await signInAs("viewer@velora.test");
    expect(await createTokenAction({ name, scopes: ["read", "train"], expiresAt: null, models: null })).toEqual({
      ok: false,
      formError: 'The "train" scope needs the modeller role.',
      fieldErrors: {},
    });
    expect(await db()("api_tokens").where({ name }).first()).toBeUndefined();
  });
});
