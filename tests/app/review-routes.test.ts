import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Actor } from "@/lib/access/actor";
import { closeDb, db } from "@/lib/db/knex";
import { SELF_REVIEW_MESSAGE } from "@/lib/db/reviews";
import { closeMailQueue } from "@/lib/mail/queue";
import { versionPageUrl } from "@/lib/mail/review";
import type { MailWorkerHandle } from "@/lib/mail/worker";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";
import { inProcessMailWorker, waitForMail } from "../helpers/mail";
import { createTestPerson } from "../helpers/people";
import { actorFor, createTestModel, storeSyntheticVersion } from "../helpers/registry";

// The review rules through POST .../submit and POST .../review, against the production build, and the mail those
// events send, read back from the run's local sink (a mail worker runs in this process).

let server: AppServer;
let worker: MailWorkerHandle;
let modeller: Actor;
let dual: { id: number; email: string };

beforeAll(async () => {
  server = await startAppServer();
  worker = inProcessMailWorker();
  modeller = await actorFor("modeller@velora.test");
  // Someone who both trains and reviews: they may review others' versions, never their own.
  dual = await createTestPerson(["viewer", "modeller", "reviewer"], "dual");
});

afterAll(async () => {
  await worker?.close();
  await server?.close();
  await closeMailQueue();
  await closeDb();
});

async function agentFor(email: string) {
  const agent = server.agent();
  await signIn(agent, email, DEMO_PASSWORD);
  return agent;
}

const path = (slug: string, version: number, what: "submit" | "review") => `/api/v1/models/${slug}/versions/${version}/${what}`;

describe("review through the REST routes", () => {
  it("return with a comment, resubmit, approve: the history records who did what, and the mail goes to the right people", async () => {
    const slug = await createTestModel(modeller);
    await storeSyntheticVersion(slug, modeller.userId);
    const modellerAgent = await agentFor("modeller@velora.test");
    const reviewerAgent = await agentFor("reviewer@velora.test");
    const comment = `The 20-30 nm band is above 1 % of the peak (${slug}).`;

    expect((await modellerAgent.post(path(slug, 1, "submit")).send({}).expect(200)).body.state).toBe("in-review");
    const returned = await reviewerAgent.post(path(slug, 1, "review")).send({ decision: "return", comment }).expect(200);
    expect(returned.body.state).toBe("draft");
    await modellerAgent.post(path(slug, 1, "submit")).send({}).expect(200);
    const approved = await reviewerAgent.post(path(slug, 1, "review")).send({ decision: "approve", comment: "Residuals fine now." }).expect(200);
    expect(approved.body.state).toBe("released");

    expect(approved.body.history.map((h: { state: string; by: string; comment: string | null }) => [h.state, h.by, h.comment])).toEqual([
      ["draft", "modeller@velora.test", null],
      ["in-review", "modeller@velora.test", null],
      ["draft", "reviewer@velora.test", comment],
      ["in-review", "modeller@velora.test", null],
      ["released", "reviewer@velora.test", "Residuals fine now."],
    ]);
    const versionId: number = (await db()("model_versions").join("models", "models.id", "model_versions.model_id").where("models.slug", slug).first("model_versions.id")).id;
    const reviews = await db()("reviews").where({ version_id: versionId }).orderBy("id");
    const reviewer = await actorFor("reviewer@velora.test");
    expect(reviews.map((r: { reviewer_id: number; decision: string; comment: string }) => [r.reviewer_id, r.decision, r.comment])).toEqual([
      [reviewer.userId, "return", comment],
      [reviewer.userId, "approve", "Residuals fine now."],
    ]);
    const audit = await db()("audit_events").where({ subject_type: "model_version", subject_id: String(versionId) }).orderBy("id");
    expect(audit.map((a: { action: string; actor_user_id: number }) => [a.action, a.actor_user_id])).toEqual([
      ["version.create", modeller.userId],
      ["version.submit", modeller.userId],
      ["version.return", reviewer.userId],
      ["version.submit", modeller.userId],
      ["version.approve", reviewer.userId],
    ]);

    // Reviewers hear of each submission: subject naming model and version, the figures and a link to the page.
    const link = versionPageUrl(slug, 1);
    expect(link).toBe(`http://stillpoint.test:3000/models/${slug}/versions/1`);
    const requests = await waitForMail((m) => m.subject === `Review requested: ${slug} version 1` && m.envelope.to.includes("reviewer@velora.test"), { count: 2 });
    for (const mail of requests) {
      expect(mail.text).toContain(`modeller@velora.test submitted version 1 of`);
      expect(mail.text).toContain(`Look at it and decide: ${link}`);
      expect(mail.text).toContain("Order: 1, 6 terms");
      expect(mail.text).toContain("Valid up to 10 nm RMS");
      expect(mail.text).toContain(SURROGATE_NOTICE);
    }
    // Every other reviewer gets a copy of their own; the author none.
    await waitForMail((m) => m.subject === `Review requested: ${slug} version 1` && m.envelope.to.includes(dual.email), { count: 2 });
    const rows = await db()("notifications").where({ version_id: versionId, kind: "version-submitted" });
    expect(rows.map((r: { recipient: string }) => r.recipient)).not.toContain("modeller@velora.test");
    const sink = await waitForMail((m) => m.subject === `Review requested: ${slug} version 1`, { count: rows.length });
    expect(sink.map((m) => m.envelope.to.join()).sort()).toEqual(rows.map((r: { recipient: string }) => r.recipient).sort());

    // The modeller hears each decision with the reviewer's comment.
    const [back] = await waitForMail((m) => m.subject === `Returned to draft: ${slug} version 1`);
    expect(back.envelope.to).toEqual(["modeller@velora.test"]);
    expect(back.kind).toBe("version-decided");
    expect(back.text).toContain("reviewer@velora.test returned version 1 of");
    expect(back.text).toContain(comment);
    expect(back.text).toContain(link);
    const [released] = await waitForMail((m) => m.subject === `Released: ${slug} version 1`);
    expect(released.envelope.to).toEqual(["modeller@velora.test"]);
    expect(released.text).toContain("Residuals fine now.");

    const decided = await db()("notifications").where({ version_id: versionId, kind: "version-decided" }).orderBy("id");
    expect(decided.map((r: { recipient: string }) => r.recipient)).toEqual(["modeller@velora.test", "modeller@velora.test"]);
  });

  it("refuses a reviewer's decision on their own version (403), leaving it in review and mailing nobody", async () => {
    const dualActor = await actorFor(dual.email);
    const slug = await createTestModel(dualActor);
    const { id } = await storeSyntheticVersion(slug, dual.id);
    const agent = await agentFor(dual.email);
    await agent.post(path(slug, 1, "submit")).send({}).expect(200);
    for (const decision of ["approve", "return"]) {
      const refused = await agent.post(path(slug, 1, "review")).send({ decision, comment: "mine" }).expect(403);
      expect(refused.headers["content-type"]).toContain("application/problem+json");
      expect(refused.body).toMatchObject({ status: 403, detail: SELF_REVIEW_MESSAGE });
    }
    const version = await agent.get(`/api/v1/models/${slug}/versions/1`).expect(200);
    expect(version.body.state).toBe("in-review");
    expect(version.body.history.map((h: { state: string }) => h.state)).toEqual(["draft", "in-review"]);
    expect(await db()("reviews").where({ version_id: id })).toEqual([]);
    expect(await db()("notifications").where({ version_id: id, kind: "version-decided" })).toEqual([]);
    // Another reviewer may decide on it.
    const reviewerAgent = await agentFor("reviewer@velora.test");
    expect((await reviewerAgent.post(path(slug, 1, "review")).send({ decision: "approve" }).expect(200)).body.state).toBe("released");
  });

  it("refuses a return without a comment (422 naming the comment), whitespace alone included", async () => {
    const slug = await createTestModel(modeller);
    await storeSyntheticVersion(slug, modeller.userId);
    await (await agentFor("modeller@velora.test")).post(path(slug, 1, "submit")).send({}).expect(200);
    const reviewerAgent = await agentFor("reviewer@velora.test");
    for (const body of [{ decision: "return" }, { decision: "return", comment: null }, { decision: "return", comment: "  \n " }]) {
      const refused = await reviewerAgent.post(path(slug, 1, "review")).send(body).expect(422);
      expect(refused.body.issues).toEqual([{ path: "comment", message: "Returning a version needs a comment that says what to change." }]);
    }
    const version = await reviewerAgent.get(`/api/v1/models/${slug}/versions/1`).expect(200);
    expect(version.body.state).toBe("in-review");
  });

  it("answers 409 for a decision on a version that is not in review, and 404 for a version that does not exist", async () => {
    const slug = await createTestModel(modeller);
    await storeSyntheticVersion(slug, modeller.userId);
    const reviewerAgent = await agentFor("reviewer@velora.test");
    const draft = await reviewerAgent.post(path(slug, 1, "review")).send({ decision: "approve" }).expect(409);
    expect(draft.body.detail).toBe("Version 1 is draft; only a version in review can be approved or returned.");
    await (await agentFor("modeller@velora.test")).post(path(slug, 1, "submit")).send({}).expect(200);
    await reviewerAgent.post(path(slug, 1, "review")).send({ decision: "approve" }).expect(200);
    const again = await reviewerAgent.post(path(slug, 1, "review")).send({ decision: "approve" }).expect(409);
    expect(again.body.detail).toBe("Version 1 is released; only a version in review can be approved or returned.");
    const missing = await reviewerAgent.post(path(slug, 7, "review")).send({ decision: "approve" }).expect(404);
    expect(missing.body.detail).toBe(`Model "${slug}" has no version 7.`);
  });
});
