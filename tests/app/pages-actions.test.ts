import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb, db } from "@/lib/db/knex";
import { insertRun } from "@/lib/db/runs";
import { loadModel } from "@/lib/db/models";
import { VELORA_SETUP } from "@/lib/demo/velora";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";
import { actorFor, createTestModel } from "../helpers/registry";
import { actionId, callAction } from "../helpers/server-actions";

// A server action is a public POST endpoint: anyone can call it with its id and any arguments, page or no page.
// These tests call each registry action the way the framework's client does (POST with a Next-Action header and the
// arguments as JSON) with a viewer's session and with no session, and check both the answer and that nothing changed.

type Agent = ReturnType<AppServer["agent"]>;

let server: AppServer;
let viewer: Agent;
let signedOut: Agent;
let smallSlug: string;

beforeAll(async () => {
  server = await startAppServer();
  viewer = server.agent();
  await signIn(viewer, "viewer@velora.test", DEMO_PASSWORD);
  signedOut = server.agent();
  smallSlug = await createTestModel(await actorFor("modeller@velora.test"));
});

afterAll(async () => {
  await server?.close();
  await closeDb();
});

const tag = `${process.pid}-${Date.now().toString(36)}`;

/**
 * A signed-out caller meets the proxy first (a redirect to sign-in, the action never runs). The actions' own refusal of
 * a caller without a session is checked in-process in pages-actions-direct.test.ts, where no proxy stands in front.
 */
async function expectSignedOutRefused(id: string, pagePath: string, args: unknown[]) {
  const answer = await callAction(signedOut, pagePath, id, args);
  expect(answer.status).toBe(307);
  expect(new URL(answer.location!, server.baseUrl).pathname).toBe("/sign-in");
  expect(answer.text).not.toContain('"ok":true');
}

describe("registry server actions called directly", () => {
  it("createSetupAction refuses a viewer and a signed-out caller and stores nothing", async () => {
    const id = actionId("app/(workspace)/setups/new/actions.ts", "createSetupAction");
    const name = `refused setup ${tag}`;
    const input = { name, setup: VELORA_SETUP };
    const asViewer = await callAction(viewer, "/setups/new", id, [input]);
    expect(asViewer.status).toBe(200);
    expect(asViewer.text).toContain("This needs the modeller role.");
    expect(asViewer.text).not.toContain('"ok":true');
    await expectSignedOutRefused(id, "/setups/new", [input]);
    expect(await db()("setups").where({ name }).first()).toBeUndefined();
  });

  it("createModelAction refuses a viewer and a signed-out caller and stores nothing", async () => {
    const id = actionId("app/(workspace)/models/new/actions.ts", "createModelAction");
    const slug = `refused-${tag}`;
    const setup: { id: number } = await db()("setups").first();
    const input = { slug, name: "Refused", description: null, setupId: setup.id, zernike: { ordering: "noll", indices: [4, 5, 6] } };
    const asViewer = await callAction(viewer, "/models/new", id, [input]);
    expect(asViewer.status).toBe(200);
    expect(asViewer.text).toContain("This needs the modeller role.");
    await expectSignedOutRefused(id, "/models/new", [input]);
    expect(await db()("models").where({ slug }).first()).toBeUndefined();
  });

  it("queueTrainingAction refuses a viewer and a signed-out caller and queues no run", async () => {
    const id = actionId("app/(workspace)/models/[slug]/versions/new/actions.ts", "queueTrainingAction");
    const model = (await loadModel(smallSlug))!;
    const runsBefore = (await db()("runs").where({ model_id: model.id }).count({ n: "*" }).first()) as { n: number };
    const input = { order: 1, generatingSet: { design: "random", size: 20, maxRmsNm: 10, seed: 1 }, validationSet: null };
    const asViewer = await callAction(viewer, `/models/${smallSlug}/versions/new`, id, [smallSlug, input]);
    expect(asViewer.status).toBe(200);
    expect(asViewer.text).toContain("This needs the modeller role.");
    await expectSignedOutRefused(id, `/models/${smallSlug}/versions/new`, [smallSlug, input]);
    const runsAfter = (await db()("runs").where({ model_id: model.id }).count({ n: "*" }).first()) as { n: number };
    expect(Number(runsAfter.n)).toBe(Number(runsBefore.n));
  });

  it("submitForReviewAction refuses a viewer, a reviewer and a signed-out caller; the draft stays a draft", async () => {
    const id = actionId("app/(workspace)/models/[slug]/versions/[version]/actions.ts", "submitForReviewAction");
    const page = "/models/velora-transmit/versions/4";
    const asViewer = await callAction(viewer, page, id, ["velora-transmit", 4]);
    expect(asViewer.status).toBe(200);
    expect(asViewer.text).toContain("This needs the modeller role.");
    const reviewer = server.agent();
    await signIn(reviewer, "reviewer@velora.test", DEMO_PASSWORD);
    expect((await callAction(reviewer, page, id, ["velora-transmit", 4])).text).toContain("This needs the modeller role.");
    await expectSignedOutRefused(id, page, ["velora-transmit", 4]);
    const model = (await loadModel("velora-transmit"))!;
    const v4: { state: string } = await db()("model_versions").where({ model_id: model.id, version: 4 }).first();
    expect(v4.state).toBe("draft");
  });

  it("cancelRunAction refuses a viewer and a signed-out caller; the run is not cancelled", async () => {
    const id = actionId("app/(workspace)/runs/[id]/actions.ts", "cancelRunAction");
    const modeller = await actorFor("modeller@velora.test");
    // A run row without queued work: only the cancellation could change its state.
    const model = (await loadModel(smallSlug))!;
    const runId = await insertRun({ kind: "training", modelId: model.id, spec: {}, total: 10, createdBy: modeller.userId });
    const asViewer = await callAction(viewer, `/runs/${runId}`, id, [runId]);
    expect(asViewer.status).toBe(200);
    expect(asViewer.text).toContain("Only the modeller who queued this run (with the train scope) or an admin may cancel it.");
    await expectSignedOutRefused(id, `/runs/${runId}`, [runId]);
    const run: { state: string } = await db()("runs").where({ id: runId }).first();
    expect(run.state).toBe("queued");
    await db()("runs").where({ id: runId }).update({ state: "cancelled" });
  });

  it("createTokenAction refuses a signed-out caller, and a train scope to a viewer; no token is stored", async () => {
    const id = actionId("app/(workspace)/tokens/actions.ts", "createTokenAction");
    const name = `refused-token-${tag}`;
    const input = { name, scopes: ["read", "train"], expiresAt: null, models: null };
    const asViewer = await callAction(viewer, "/tokens", id, [input]);
    expect(asViewer.status).toBe(200);
    expect(asViewer.text).toContain('The \\"train\\" scope needs the modeller role.');
    await expectSignedOutRefused(id, "/tokens", [{ ...input, scopes: ["read"] }]);
    expect(await db()("api_tokens").where({ name }).first()).toBeUndefined();
  });

  it("answer the schema's field messages for a bad request from a modeller", async () => {
    const id = actionId("app/(workspace)/setups/new/actions.ts", "createSetupAction");
    const modeller = server.agent();
    await signIn(modeller, "modeller@velora.test", DEMO_PASSWORD);
    const name = `bad setup ${tag}`;
    const bad = { name, setup: { ...VELORA_SETUP, farField: { halfAngleNrad: 60, pointsPerAxis: 8 } } };
    const answer = await callAction(modeller, "/setups/new", id, [bad]);
    expect(answer.status).toBe(200);
    expect(answer.text).toContain('"setup.farField.pointsPerAxis":"farField.pointsPerAxis must be an odd integer >= 3"');
    expect(await db()("setups").where({ name }).first()).toBeUndefined();
  });
});
