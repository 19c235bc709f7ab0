import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Actor } from "@/lib/access/actor";
import { closeDb, db } from "@/lib/db/knex";
import { reviewVersion } from "@/lib/db/reviews";
import { getVersion, submitVersion } from "@/lib/db/versions";
import { actorFor, createTestModel, storeSyntheticVersion } from "../helpers/registry";
import { testDatabaseName } from "../helpers/test-database";

testDatabaseName();

let modeller: Actor;
let reviewer: Actor;
let viewer: Actor;

beforeAll(async () => {
  modeller = await actorFor("modeller@velora.test");
  reviewer = await actorFor("reviewer@velora.test");
  viewer = await actorFor("viewer@velora.test");
});
afterAll(async () => {
  await closeDb();
});

function storeVersion(slug: string, scale: number) {
  return storeSyntheticVersion(slug, modeller.userId, { scale });
}

describe("model versions in the database", () => {
  it("numbers versions created at the same time 1, 2, 3, ... without a gap or a repeat", async () => {
    const slug = await createTestModel(modeller);
    const created = await Promise.all(Array.from({ length: 6 }, (_, i) => storeVersion(slug, i + 1)));
    expect(created.map((c) => c.version).sort((a, b) => a - b)).toEqual([1, 2, 3, 4, 5, 6]);
  });

  it("lets a draft change but refuses, in the database itself, to change a released version's blob or coefficients", async () => {
    const slug = await createTestModel(modeller);
    const { id } = await storeVersion(slug, 1);
    // A draft may still be rewritten.
    await db()("version_blobs").where({ version_id: id }).update({ size_bytes: db().raw("size_bytes") });

    await submitVersion(modeller, slug, 1);
    await reviewVersion(reviewer, slug, 1, { decision: "approve", comment: null });
    expect((await getVersion(viewer, slug, 1)).state).toBe("released");

    await expect(db().raw("UPDATE version_blobs SET bytes = 'tampered' WHERE version_id = ?", [id])).rejects.toThrow(
      /coefficient blob of a version that has left draft cannot change/,
    );
    await expect(db().raw("UPDATE model_versions SET coefficients_sha256 = REPEAT('0', 64) WHERE id = ?", [id])).rejects.toThrow(
      /coefficients and terms of a version that has left draft cannot change/,
    );
    await expect(db().raw("UPDATE model_versions SET terms = '[]' WHERE id = ?", [id])).rejects.toThrow(/cannot change/);
    await expect(db().raw("DELETE FROM version_blobs WHERE version_id = ?", [id])).rejects.toThrow(/cannot be deleted/);
    await expect(db().raw("DELETE FROM model_versions WHERE id = ?", [id])).rejects.toThrow(/cannot be deleted/);
    const [rows] = (await db().raw("SELECT sha256, size_bytes FROM version_blobs WHERE version_id = ?", [id])) as [{ sha256: string }[]];
    expect(rows).toHaveLength(1);
  });

  it("submits only the author's own drafts, once", async () => {
    const slug = await createTestModel(modeller);
    await storeVersion(slug, 1);
    const other = { ...modeller, userId: reviewer.userId, email: reviewer.email };
    await expect(submitVersion(other, slug, 1)).rejects.toThrow(/Only the modeller who made this version/);
    await expect(submitVersion(viewer, slug, 1)).rejects.toThrow(/needs the modeller role/);
    const submitted = await submitVersion(modeller, slug, 1);
    expect(submitted.state).toBe("in-review");
    expect(submitted.history.map((h) => [h.state, h.by])).toEqual([["draft", "modeller@velora.test"], ["in-review", "modeller@velora.test"]]);
    await expect(submitVersion(modeller, slug, 1)).rejects.toMatchObject({ status: 409 });
  });
});
