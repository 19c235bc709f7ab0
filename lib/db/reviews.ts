import type { Knex } from "knex";
import { assertCan, type Actor } from "../access/actor.ts";
import { ConflictError, ForbiddenError, NotFoundError, UnprocessableError } from "../errors.ts";
import { dispatchMail, recordMail } from "../mail/index.ts";
import { versionDecidedMail } from "../mail/review.ts";
import type { ResidualStatistics } from "../surrogate/statistics.ts";
import type { ValidityRange } from "../surrogate/validity.ts";
import { auditedBy, recordAuditEvent } from "./audit.ts";
import { db } from "./knex.ts";
import { requireModel } from "./models.ts";
import { fromJson, toIso } from "./rows.ts";
import { changeVersionState, getVersion, type VersionDetail } from "./versions.ts";

export type ReviewDecision = "approve" | "return";

/** The refusal of a decision on one's own version (one message for the data layer, the route and the page). */
export const SELF_REVIEW_MESSAGE = "Nobody reviews a version they made; another reviewer must decide.";

/**
 * A reviewer's decision on a version in review: approve (-> `released`) or return to `draft` with a comment.
 * Nobody reviews a version they made. The decision and its comment stay in the version's history, and the version's
 * modeller is sent the decision by mail (recorded with the decision, sent from the queue: a mail that cannot go out
 * is retried and never undoes the decision).
 * @throws {ForbiddenError} for the version's author; {UnprocessableError} for a return without a comment;
 *   {NotFoundError} for an unknown version; {ConflictError} when the version is not in review
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
  const mailIds = await conn.transaction(async (trx) => {
    const row: { id: number; state: string; created_by: number | null } | undefined = await trx("model_versions")
      .where({ model_id: model.id, version })
      .forUpdate()
      .first();
    if (!row) throw new NotFoundError(`Model "${slug}" has no version ${version}.`);
    if (row.created_by === actor.userId) throw new ForbiddenError(SELF_REVIEW_MESSAGE);
    if (row.state !== "in-review") throw new ConflictError(`Version ${version} is ${row.state}; only a version in review can be approved or returned.`);
    await trx("reviews").insert({ version_id: row.id, reviewer_id: actor.userId, decision: input.decision, comment });
    await changeVersionState(trx, row.id, input.decision === "approve" ? "released" : "draft", actor.userId, comment);
    await recordAuditEvent(
      { ...auditedBy(actor), action: `version.${input.decision}`, subjectType: "model_version", subjectId: row.id, detail: { model: slug, version, comment } },
      trx,
    );
    if (row.created_by === null) return [];
    const author: { id: number; email: string } | undefined = await trx("users").select("id", "email").where({ id: row.created_by }).first();
    if (!author) return [];
    const mail = versionDecidedMail(
      { versionId: row.id, slug, modelName: model.name, version, decision: input.decision, comment, reviewer: actor.email },
      { email: author.email, userId: author.id },
    );
    return recordMail(trx, [mail]);
  });
  await dispatchMail(mailIds);
  return getVersion(actor, slug, version, conn);
}

/** One line of the review queue: the figures a reviewer scans first. */
export interface ReviewQueueItem {
  model: string;
  modelName: string;
  version: number;
  order: 1 | 2;
  termCount: number;
  /** Worst validation error over every node and both axes, pm/nrad, and relative to the peak; null without statistics. */
  maxAbsErrorPmPerNrad: number | null;
  maxErrorRelativeToPeak: number | null;
  /** Largest total wavefront error of the validity range, nm RMS. */
  maxTotalRmsNm: number;
  author: string | null;
  /** When the version entered review (its latest submission). */
  waitingSince: string;
}

/** Versions in review, the longest waiting first (reviewers). */
export async function listReviewQueue(actor: Actor, conn: Knex = db()): Promise<ReviewQueueItem[]> {
  assertCan(actor, "review");
  const submitted = conn("version_state_events").select("version_id").max({ since: "at" }).where({ state: "in-review" }).groupBy("version_id").as("submitted");
  const rows: {
    slug: string;
    name: string;
    version: number;
    order: number;
    term_count: number;
    statistics: string | ResidualStatistics | null;
    validity: string | ValidityRange;
    author: string | null;
    since: Date | null;
    created_at: Date;
  }[] = await conn("model_versions")
    .join("models", "models.id", "model_versions.model_id")
    .leftJoin("users", "users.id", "model_versions.created_by")
    .leftJoin(submitted, "submitted.version_id", "model_versions.id")
    .where("model_versions.state", "in-review")
    .select(
      "models.slug",
      "models.name",
      "model_versions.version",
      "model_versions.order",
      "model_versions.term_count",
      "model_versions.statistics",
      "model_versions.validity",
      "model_versions.created_at",
      "users.email as author",
      "submitted.since",
    )
    .orderByRaw("COALESCE(submitted.since, model_versions.created_at), model_versions.id");
  return rows.map((row) => {
    const overall = row.statistics === null ? null : fromJson<ResidualStatistics>(row.statistics).overall;
    return {
      model: row.slug,
      modelName: row.name,
      version: row.version,
      order: row.order as 1 | 2,
      termCount: row.term_count,
      maxAbsErrorPmPerNrad: overall?.maxAbsErrorPmPerNrad ?? null,
      maxErrorRelativeToPeak: overall?.maxErrorRelativeToPeak ?? null,
      maxTotalRmsNm: fromJson<ValidityRange>(row.validity).maxTotalRmsNm,
      author: row.author,
      waitingSince: toIso(row.since ?? row.created_at)!,
    };
  });
}
