import type { Knex } from "knex";
import { assertCan, type Actor } from "../access/actor.ts";
import { ConflictError, ForbiddenError, UnprocessableError } from "../errors.ts";
import { auditedBy, recordAuditEvent } from "./audit.ts";
import { db } from "./knex.ts";
import { requireModel } from "./models.ts";
import { changeVersionState, getVersion, type VersionDetail } from "./versions.ts";

export type ReviewDecision = "approve" | "return";

/**
 * A reviewer's decision on a version in review: approve (-> `released`) or return to `draft` with a comment.
 * Nobody reviews a version they made. The decision and its comment stay in the version's history.
 * @throws {ForbiddenError} for the version's author; {UnprocessableError} for a return without a comment;
 *   {ConflictError} when the version is not in review
 */
export async function reviewVersion(
  actor: Actor,
  slug: string,
  version: number,
  input: { decision: ReviewDecision; comment: string | null },
  conn: Knex = db(),
): Promise<VersionDetail> {
  assertCan(actor, "review", slug);
  const comment = input.comment?.trim() || null;
  if (input.decision === "return" && comment === null) throw new UnprocessableError("Returning a version needs a comment that says what to change.");
  const model = await requireModel(actor, slug, conn);
  await conn.transaction(async (trx) => {
    const row: { id: number; state: string; created_by: number | null } | undefined = await trx("model_versions")
      .where({ model_id: model.id, version })
      .forUpdate()
      .first();
    if (!row) throw new ConflictError(`Model "${slug}" has no version ${version}.`);
    if (row.created_by === actor.userId) throw new ForbiddenError("Nobody reviews a version they made; another reviewer must decide.");
    if (row.state !== "in-review") throw new ConflictError(`Version ${version} is ${row.state}; only a version in review can be approved or returned.`);
    await trx("reviews").insert({ version_id: row.id, reviewer_id: actor.userId, decision: input.decision, comment });
    await changeVersionState(trx, row.id, input.decision === "approve" ? "released" : "draft", actor.userId, comment);
    await recordAuditEvent(
      { ...auditedBy(actor), action: `version.${input.decision}`, subjectType: "model_version", subjectId: row.id, detail: { model: slug, version, comment } },
      trx,
    );
  });
  return getVersion(actor, slug, version, conn);
}
