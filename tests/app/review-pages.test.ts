import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Actor } from "@/lib/access/actor";
import { closeDb } from "@/lib/db/knex";
import { SELF_REVIEW_MESSAGE } from "@/lib/db/reviews";
import { getVersion, submitVersion } from "@/lib/db/versions";
import { closeMailQueue } from "@/lib/mail/queue";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";
import { signIn, startAppServer, type AppServer } from "../helpers/app-server";
import { createTestPerson } from "../helpers/people";
import { actorFor, createTestModel, storeSyntheticVersion, syntheticStatistics } from "../helpers/registry";
import { actionId, callAction } from "../helpers/server-actions";

// The review queue, the review part of the version page and the mailbox page, per role, against the production build.

let server: AppServer;
let modeller: Actor;
let dual: { id: number; email: string };
let first = "";
let second = "";

beforeAll(async () => {
  server = await startAppServer();
  modeller = await actorFor("modeller@velora.test");
  dual = await createTestPerson(["viewer", "modeller", "reviewer"], "dual-pages");
  // Two versions in review, submitted in this order, with figures that differ.
  first = await createTestModel(modeller);
  await storeSyntheticVersion(first, modeller.userId, { statistics: syntheticStatistics(0.0123, 0.00456) });
  await submitVersion(modeller, first, 1);
  await new Promise((resolve) => setTimeout(resolve, 20));
  second = await createTestModel(modeller);
  await storeSyntheticVersion(second, modeller.userId, { statistics: null });
  await submitVersion(modeller, second, 1);
});

afterAll(async () => {
  await server?.close();
  await closeMailQueue();
  await closeDb();
});

async function agentFor(email: string) {
  const agent = server.agent();
  await signIn(agent, email, DEMO_PASSWORD);
  return agent;
}

/** The text of the queue row that links to a version (tags stripped, spaces collapsed). */
function rowText(html: string, slug: string): string {
  const rows = html.split('data-testid="queue-row"').slice(1);
  const row = rows.find((r) => r.includes(`href="/models/${slug}/versions/1"`));
  if (!row) throw new Error(`no queue row for ${slug}`);
  return row.slice(row.indexOf(">") + 1).split("</tr>")[0].replace(/<!-- -->/g, "").replace(/<[^>]+>/g, " ").replace(/&#x27;/g, "'").replace(/\s+/g, " ").trim();
}

describe("the review queue", () => {
  it("lists versions in review to a reviewer, the longest waiting first, with order, terms, worst error, validity and author", async () => {
    const agent = await agentFor("reviewer@velora.test");
    const page = await agent.get("/reviews").expect(200);
    const html = page.text;
    const demo = html.indexOf('href="/models/velora-transmit/versions/3"');
    const a = html.indexOf(`href="/models/${first}/versions/1"`);
    const b = html.indexOf(`href="/models/${second}/versions/1"`);
    // The demo's version 3 was submitted when the database was seeded, before either.
    expect(demo).toBeGreaterThan(0);
    expect(a).toBeGreaterThan(demo);
    expect(b).toBeGreaterThan(a);
    // formatNumber(0.0123, 3) and 0.00456 as a percentage; validity 10 nm RMS (syntheticModel); 6 terms of order 1.
    expect(rowText(html, first)).toMatch(/^\S+ v1 Test model .+ 1 6 0\.0123 0\.456 % 10 modeller@velora\.test \d{4}-\d\d-\d\d \d\d:\d\d (\d+ min )?\d+ s$/);
    expect(rowText(html, second)).toContain("no validation set");
    expect(html).toContain(SURROGATE_NOTICE);
    const home = await agent.get("/").expect(200);
    expect(home.text).toMatch(/<a[^>]*href="\/reviews"[^>]*>Reviews<\/a>/);
  });

  // The workspace streams behind its loading state, so the forbidden page arrives as its content, not as a 403 status.
  it("is forbidden to viewers, modellers and admins, whose navigation does not show it", async () => {
    for (const email of ["viewer@velora.test", "modeller@velora.test", "admin@velora.test"]) {
      const agent = await agentFor(email);
      const page = (await agent.get("/reviews")).text;
      expect(page).toContain("Your roles do not include access to this page.");
      expect(page).not.toContain('data-testid="review-queue"');
      expect((await agent.get("/").expect(200)).text).not.toMatch(/href="\/reviews"/);
    }
  });
});

describe("the review part of the version page", () => {
  it("shows the decision form to a reviewer who did not make the version, and not to its modeller", async () => {
    const reviewerPage = await (await agentFor("reviewer@velora.test")).get(`/models/${first}/versions/1`).expect(200);
    expect(reviewerPage.text).toContain('data-testid="review-panel"');
    expect(reviewerPage.text).toContain("Approve: release this version");
    const modellerPage = await (await agentFor("modeller@velora.test")).get(`/models/${first}/versions/1`).expect(200);
    expect(modellerPage.text).not.toContain('data-testid="review-panel"');
    expect(modellerPage.text).toContain("Waiting for a reviewer");
  });

  it("hides the form from a reviewer on their own version; the action through the build refuses them all the same", async () => {
    const dualActor = await actorFor(dual.email);
    const own = await createTestModel(dualActor);
    await storeSyntheticVersion(own, dual.id);
    await submitVersion(dualActor, own, 1);
    const agent = await agentFor(dual.email);
    const page = await agent.get(`/models/${own}/versions/1`).expect(200);
    expect(page.text).not.toContain('data-testid="review-panel"');
    expect(page.text).toContain("You made this version, so another reviewer decides on it.");
    const id = actionId("app/(workspace)/models/[slug]/versions/[version]/actions.ts", "reviewVersionAction");
    const refused = await callAction(agent, `/models/${own}/versions/1`, id, [own, 1, { decision: "approve", comment: null }]);
    expect(refused.status).toBe(200);
    expect(refused.text).toContain(SELF_REVIEW_MESSAGE);
    expect((await getVersion(dualActor, own, 1)).state).toBe("in-review");
  });

  it("a reviewer returns a version through the page's action; the page then shows the comment to its modeller", async () => {
    const id = actionId("app/(workspace)/models/[slug]/versions/[version]/actions.ts", "reviewVersionAction");
    const reviewer = await agentFor("reviewer@velora.test");
    const noComment = await callAction(reviewer, `/models/${first}/versions/1`, id, [first, 1, { decision: "return", comment: null }]);
    expect(noComment.text).toContain("Returning a version needs a comment that says what to change.");
    const comment = "Validate up to 30 nm RMS before release.";
    const answered = await callAction(reviewer, `/models/${first}/versions/1`, id, [first, 1, { decision: "return", comment }]);
    expect(answered.text).toContain('"state":"draft"');
    const page = await (await agentFor("modeller@velora.test")).get(`/models/${first}/versions/1`).expect(200);
    expect(page.text).toContain('data-testid="returned-comment"');
    expect(page.text).toContain(comment);
    expect(page.text).toContain("Submit it again once the comment is answered.");
    expect(page.text).toContain("Submit for review");
    // It has left the queue.
    expect((await reviewer.get("/reviews").expect(200)).text).not.toContain(`href="/models/${first}/versions/1"`);
  });
});

describe("the mailbox page", () => {
  it("does not exist outside a development start, even for an admin, and is refused to others", async () => {
    const admin = await agentFor("admin@velora.test");
    await admin.get("/mailbox").expect(404);
    expect((await admin.get("/").expect(200)).text).not.toMatch(/href="\/mailbox"/);
    await (await agentFor("reviewer@velora.test")).get("/mailbox").expect(403);
  });
});
