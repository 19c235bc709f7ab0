import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from "vitest";
import type { Actor } from "@/lib/access/actor";
import { closeDb, db } from "@/lib/db/knex";
import { SELF_REVIEW_MESSAGE } from "@/lib/db/reviews";
import { getVersion, submitVersion } from "@/lib/db/versions";
import { closeMailQueue } from "@/lib/mail/queue";
import { createTestPerson } from "../helpers/people";
import { actorFor, createTestModel, storeSyntheticVersion } from "../helpers/registry";
import { testDatabaseName } from "../helpers/test-database";

// The version page's review action called as a plain function, with the session next-auth would read replaced by the
// one each test sets: every refusal here is the action's own or the data layer's (tests/app/review-pages.test.ts
// calls it through the production build).

let session: { user: { id: number } } | null = null;
vi.mock("next-auth", async (importOriginal) => ({
  ...(await importOriginal<typeof import("next-auth")>()),
  getServerSession: vi.fn(async () => session),
}));
vi.mock("next/cache", () => ({ revalidatePath: vi.fn() }));

const { reviewVersionAction } = await import("@/app/(workspace)/models/[slug]/versions/[version]/actions");

testDatabaseName();
let modeller: Actor;
let dual: { id: number; email: string };

async function signInAs(email: string | null) {
  session = email === null ? null : { user: { id: (await actorFor(email)).userId } };
}

/** A fresh model whose version 1 (made by `author`) is in review. */
async function inReview(author: Actor): Promise<string> {
  const slug = await createTestModel(author);
  await storeSyntheticVersion(slug, author.userId);
  await submitVersion(author, slug, 1);
  return slug;
}

beforeAll(async () => {
  modeller = await actorFor("modeller@velora.test");
  dual = await createTestPerson(["viewer", "modeller", "reviewer"], "dual-action");
});

beforeEach(() => {
  session = null;
});

afterAll(async () => {
  await closeMailQueue();
  await closeDb();
});

describe("reviewVersionAction, with no proxy in front", () => {
  it("refuses a signed-out caller, a viewer and a modeller before reading the request", async () => {
    const slug = await inReview(modeller);
    await signInAs(null);
    expect(await reviewVersionAction(slug, 1, { decision: "approve" })).toEqual({ ok: false, formError: "Sign in to use this resource.", fieldErrors: {} });
    for (const email of ["viewer@velora.test", "modeller@velora.test"]) {
      await signInAs(email);
      expect(await reviewVersionAction(slug, 1, { decision: "approve" })).toEqual({ ok: false, formError: "This needs the reviewer role.", fieldErrors: {} });
      // Even a malformed request is refused for the role, not answered with field messages.
      expect(await reviewVersionAction(slug, 1, { decision: "maybe" })).toEqual({ ok: false, formError: "This needs the reviewer role.", fieldErrors: {} });
    }
    expect((await getVersion(modeller, slug, 1)).state).toBe("in-review");
  });

  it("refuses a decision on one's own version in the data layer, whatever the form shows", async () => {
    const dualActor = await actorFor(dual.email);
    const slug = await inReview(dualActor);
    await signInAs(dual.email);
    expect(await reviewVersionAction(slug, 1, { decision: "approve", comment: null })).toEqual({ ok: false, formError: SELF_REVIEW_MESSAGE, fieldErrors: {} });
    expect((await getVersion(dualActor, slug, 1)).state).toBe("in-review");
  });

  it("puts the missing comment of a return beside the comment field", async () => {
    const slug = await inReview(modeller);
    await signInAs("reviewer@velora.test");
    const message = "Returning a version needs a comment that says what to change.";
    expect(await reviewVersionAction(slug, 1, { decision: "return", comment: "" })).toEqual({ ok: false, formError: "Some fields need attention.", fieldErrors: { comment: message } });
    expect(await reviewVersionAction(slug, 1, { decision: "return" })).toEqual({ ok: false, formError: "Some fields need attention.", fieldErrors: { comment: message } });
    expect((await getVersion(modeller, slug, 1)).state).toBe("in-review");
  });

  it("refuses a decision on a version that is not in review with the conflict's message", async () => {
    const slug = await createTestModel(modeller);
    await storeSyntheticVersion(slug, modeller.userId);
    await signInAs("reviewer@velora.test");
    expect(await reviewVersionAction(slug, 1, { decision: "approve" })).toEqual({
      ok: false,
      formError: "Version 1 is draft; only a version in review can be approved or returned.",
      fieldErrors: {},
    });
    expect(await reviewVersionAction(slug, 2, { decision: "approve" })).toEqual({ ok: false, formError: `Model "${slug}" has no version 2.`, fieldErrors: {} });
  });

  it("returns and approves through the same reviewVersion as the route: the history records who did what", async () => {
    const slug = await inReview(modeller);
    await signInAs("reviewer@velora.test");
    expect(await reviewVersionAction(slug, 1, { decision: "return", comment: "Add validation samples above 25 nm." })).toEqual({ ok: true, data: { state: "draft" } });
    await submitVersion(modeller, slug, 1);
    await signInAs(dual.email);
    expect(await reviewVersionAction(slug, 1, { decision: "approve", comment: "" })).toEqual({ ok: true, data: { state: "released" } });
    const history = (await getVersion(modeller, slug, 1)).history.map((h) => [h.state, h.by, h.comment]);
    expect(history).toEqual([
      ["draft", "modeller@velora.test", null],
      ["in-review", "modeller@velora.test", null],
      ["draft", "reviewer@velora.test", "Add validation samples above 25 nm."],
      ["in-review", "modeller@velora.test", null],
      ["released", dual.email, null],
    ]);
    const versionId: number = (await db()("model_versions").join("models", "models.id", "model_versions.model_id").where("models.slug", slug).first("model_versions.id")).id;
    const decided = await db()("notifications").where({ version_id: versionId, kind: "version-decided" }).orderBy("id");
    expect(decided.map((n: { recipient: string; subject: string }) => [n.recipient, n.subject])).toEqual([
      ["modeller@velora.test", `Returned to draft: ${slug} version 1`],
      ["modeller@velora.test", `Released: ${slug} version 1`],
    ]);
  });
});
