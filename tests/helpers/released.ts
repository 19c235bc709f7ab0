import { db } from "@/lib/db/knex";
import { loadModel } from "@/lib/db/models";
import { reviewVersion } from "@/lib/db/reviews";
import { insertVersion, submitVersion } from "@/lib/db/versions";
import { runTtlTask } from "@/lib/parallel/ttlTask";
import { encodeModel } from "@/lib/surrogate/modelFile";
import { trainSurrogate } from "@/lib/surrogate/train";
import { actorFor, createTestModel, SMALL_SETUP, SMALL_ZERNIKE } from "./registry";

/**
 * A fresh model of the small setup with `count` versions of one first-order surrogate (trained here on the calling
 * thread in a fraction of a second), each taken through review to `released`: versions a test may retire.
 */
export async function modelWithReleasedVersions(count: number): Promise<string> {
  const modeller = await actorFor("modeller@velora.test");
  const reviewer = await actorFor("reviewer@velora.test");
  const slug = await createTestModel(modeller);
  const { model: surrogate } = await trainSurrogate(
    {
      setup: SMALL_SETUP, zernike: SMALL_ZERNIKE, order: 1, generatingSet: { design: "random", size: 20, maxRmsNm: 10, seed: 5 },
      validationSet: null, softwareVersion: "test", createdAt: "2026-12-01T00:00:00.000Z",
    },
    async (noll, coefficientsNm) => ({ ...runTtlTask({ setup: SMALL_SETUP, nollIndices: noll, coefficientsNm, count: coefficientsNm.length / noll.length }), undefinedNodes: [] }),
  );
  const model = (await loadModel(slug))!;
  for (let v = 1; v <= count; v++) {
    await db().transaction((trx) => insertVersion(trx, { model, surrogate, file: encodeModel(surrogate), createdBy: modeller.userId }));
    await submitVersion(modeller, slug, v);
    await reviewVersion(reviewer, slug, v, { decision: "approve", comment: null });
  }
  return slug;
}
