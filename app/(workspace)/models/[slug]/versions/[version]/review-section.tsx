import { SectionHeading } from "@/components/empty-state";
import { formatTime } from "@/components/format";
import { can, type Actor } from "@/lib/access/actor";
import type { VersionDetail } from "@/lib/db/versions";
import { ReviewPanel } from "./review-panel";

/**
 * The review part of the version page: the decision form for a reviewer who did not make the version (the data layer
 * refuses the author too), a plain note for the author, and the last return's comment while the version is a draft.
 */
export function ReviewSection({ version: v, actor }: { version: VersionDetail; actor: Actor }) {
  const reviewer = can(actor, "review", v.model);
  const isAuthor = v.createdBy !== null && v.createdBy === actor.email;
  const last = v.history.at(-1);
  const returned = v.state === "draft" && v.history.length > 1 && last?.state === "draft" && last.comment ? last : null;

  if (v.state === "in-review" && reviewer) {
    return (
      <section aria-labelledby="review-heading" data-testid="review-section">
        <SectionHeading id="review-heading">Review</SectionHeading>
        {isAuthor ? (
          <p className="text-sm text-muted" data-testid="review-own-version">
            You made this version, so another reviewer decides on it.
          </p>
        ) : (
          <div className="flex flex-col gap-2">
            <p className="text-sm text-muted">
              Check the validation residuals, the validity range and the generating set below, then approve the version or return it
              with a comment. {v.createdBy ?? "Its modeller"} hears the decision by e-mail.
            </p>
            <ReviewPanel slug={v.model} version={v.version} />
          </div>
        )}
      </section>
    );
  }
  if (returned) {
    return (
      <p className="rounded border border-caution px-3 py-2 text-sm" data-testid="returned-comment">
        <span className="font-medium">Returned to draft</span> by {returned.by ?? "a reviewer"} on {formatTime(returned.at)} UTC:{" "}
        <span className="whitespace-pre-line">{returned.comment}</span>
        {isAuthor && <span className="mt-1 block text-xs text-muted">Submit it again once the comment is answered.</span>}
      </p>
    );
  }
  return null;
}
