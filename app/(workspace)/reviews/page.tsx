import type { Metadata } from "next";
import Link from "next/link";
import { EmptyState, linkClass, tdClass, thClass } from "@/components/empty-state";
import { formatDuration, formatNumber, formatTime } from "@/components/format";
import { PageHeading } from "@/components/page-heading";
import { requirePageActor } from "@/components/server/page";
import { StandingNotice } from "@/components/standing-notice";
import { listReviewQueue } from "@/lib/db/reviews";

export const metadata: Metadata = { title: "Review queue" };
export const dynamic = "force-dynamic";

/** Versions waiting for review, the longest waiting first, with the figures a reviewer scans first. */
export default async function ReviewQueuePage() {
  const { actor } = await requirePageActor("reviewer");
  const queue = await listReviewQueue(actor);
  const now = Date.now();

  return (
    <section aria-labelledby="queue-heading" className="flex flex-col gap-3">
      <PageHeading id="queue-heading" title="Review queue" />
      {queue.length === 0 ? (
        <EmptyState title="No version is waiting for review." testId="queue-empty">
          A version appears here when its modeller submits it; you are told by e-mail.
        </EmptyState>
      ) : (
        <div className="overflow-x-auto">
          <table className="w-full border-collapse bg-surface text-sm" data-testid="review-queue">
            <caption className="mb-1 text-left text-xs text-muted">
              In review, the longest waiting first. Worst error: the largest |surrogate − exact| over every validation wavefront, node and
              axis, and that relative to the largest |TTL|.
            </caption>
            <thead>
              <tr className="border-b border-line text-left text-xs text-muted">
                <th scope="col" className={thClass}>Version</th>
                <th scope="col" className={`${thClass} text-right`}>Order</th>
                <th scope="col" className={`${thClass} text-right`}>Terms</th>
                <th scope="col" className={`${thClass} text-right`}>Worst error (pm/nrad)</th>
                <th scope="col" className={`${thClass} text-right`}>Worst / peak</th>
                <th scope="col" className={`${thClass} text-right`}>Valid to (nm RMS)</th>
                <th scope="col" className={thClass}>Author</th>
                <th scope="col" className={thClass}>Waiting since (UTC)</th>
              </tr>
            </thead>
            <tbody>
              {queue.map((item) => (
                <tr key={`${item.model}/${item.version}`} className="border-b border-line align-top last:border-0" data-testid="queue-row">
                  <td className={tdClass}>
                    <Link href={`/models/${item.model}/versions/${item.version}`} className={linkClass}>
                      <span className="font-mono">{item.model}</span> v{item.version}
                    </Link>
                    <span className="block text-xs text-muted">{item.modelName}</span>
                  </td>
                  <td className={`${tdClass} text-right font-mono text-xs`}>{item.order}</td>
                  <td className={`${tdClass} text-right font-mono text-xs`}>{item.termCount}</td>
                  <td className={`${tdClass} text-right font-mono text-xs`}>
                    {item.maxAbsErrorPmPerNrad === null ? "no validation set" : formatNumber(item.maxAbsErrorPmPerNrad, 3)}
                  </td>
                  <td className={`${tdClass} text-right font-mono text-xs`}>
                    {item.maxErrorRelativeToPeak === null ? "–" : `${formatNumber(item.maxErrorRelativeToPeak * 100, 3)} %`}
                  </td>
                  <td className={`${tdClass} text-right font-mono text-xs`}>{formatNumber(item.maxTotalRmsNm)}</td>
                  <td className={`${tdClass} text-xs`}>{item.author ?? "–"}</td>
                  <td className={`${tdClass} text-xs`}>
                    <span className="font-mono">{formatTime(item.waitingSince)}</span>
                    <span className="block text-muted">{formatDuration((now - Date.parse(item.waitingSince)) / 1000)}</span>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
      <StandingNotice />
    </section>
  );
}
