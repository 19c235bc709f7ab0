import type { Metadata } from "next";
import { z } from "zod";
import Link from "next/link";
import { EmptyState, linkClass, tdClass, thClass } from "@/components/empty-state";
import { formatTime } from "@/components/format";
import { PageHeading } from "@/components/page-heading";
import { requirePageActor } from "@/components/server/page";
import { StateBadge } from "@/components/state-badge";
import { NOTICE_WINDOW_DAYS, recentUsageByVersion } from "@/lib/db/tokens";
import { listAllVersions, type VersionOverview } from "@/lib/db/versions";
import { RetiredStatus, RetireForm } from "./retire-form";

export const metadata: Metadata = { title: "Versions" };

type SearchParams = Promise<Record<string, string | string[] | undefined>>;

const VIEWS = { live: "live", retired: "retired", all: "all" } as const;
type View = keyof typeof VIEWS;

const justRetiredSchema = z.object({ version: z.string().max(200), notices: z.coerce.number().int().min(0).max(1_000_000) });

/** How far ahead the retire form proposes the sunset (common practice, no source: half a year of notice). */
const DEFAULT_SUNSET_DAYS = 180;

/** Live and retired versions across every model (admins); a released version can be retired from here. */
export default async function VersionsPage({ searchParams }: { searchParams: SearchParams }) {
  const { actor } = await requirePageActor("admin");
  const params = await searchParams;
  const raw = params.view;
  const view: View = typeof raw === "string" && raw in VIEWS ? (raw as View) : "live";
  // After a retirement from this page: which version it was and how many notices it queued (shown beside it).
  const just = justRetiredSchema.safeParse({ version: params.retired, notices: params.notices });
  const now = new Date();
  const [all, usage] = await Promise.all([listAllVersions(actor), recentUsageByVersion(now)]);
  const shown = all.filter((v) => (view === "all" ? true : view === "retired" ? v.state === "retired" : v.state !== "retired"));
  const defaultSunset = new Date(now.getTime() + DEFAULT_SUNSET_DAYS * 86_400_000).toISOString().slice(0, 10);
  const siblings = (v: VersionOverview) => all.filter((o) => o.model === v.model && o.version !== v.version && o.state !== "retired");

  return (
    <section aria-labelledby="versions-heading">
      <PageHeading id="versions-heading" title="Versions">
        <nav aria-label="Which versions" className="flex gap-1 text-sm">
          {(Object.keys(VIEWS) as View[]).map((key) => (
            <Link
              key={key}
              href={`/versions?view=${key}`}
              aria-current={key === view ? "page" : undefined}
              className={`rounded px-2 py-0.5 ${key === view ? "bg-accent text-accent-ink" : "hover:bg-sunken"}`}
            >
              {key}
            </Link>
          ))}
        </nav>
      </PageHeading>
      <p className="mb-4 text-sm text-muted">
        Retiring a released version keeps it readable and evaluable until its sunset (with Deprecation and Sunset headers), and
        e-mails every owner of a token that evaluated it in the last {NOTICE_WINDOW_DAYS} days.
      </p>
      {shown.length === 0 ? (
        <EmptyState title={view === "retired" ? "No version is retired." : "No versions."} testId="versions-empty" />
      ) : (
        <div className="overflow-x-auto">
          <table className="w-full border-collapse bg-surface text-sm" data-testid="versions-table">
            <caption className="sr-only">Versions of every model</caption>
            <thead>
              <tr className="border-b border-line text-left text-xs text-muted">
                <th scope="col" className={thClass}>Model</th>
                <th scope="col" className={thClass}>Version</th>
                <th scope="col" className={thClass}>State</th>
                <th scope="col" className={thClass}>Order, terms</th>
                <th scope="col" className={thClass}>Created (UTC)</th>
                <th scope="col" className={thClass}>Token use, {NOTICE_WINDOW_DAYS} days</th>
                <th scope="col" className={thClass}>Retirement</th>
              </tr>
            </thead>
            <tbody>
              {shown.map((v) => {
                const use = usage.get(v.versionId);
                const audience = use
                  ? `${use.people === 1 ? "1 person" : `${use.people} people`} will be e-mailed (${use.tokens === 1 ? "1 token" : `${use.tokens} tokens`} evaluated it).`
                  : `No token evaluated it in ${NOTICE_WINDOW_DAYS} days: nobody will be e-mailed.`;
                return (
                  <tr key={v.versionId} className="border-b border-line align-top last:border-0" data-version-row={`${v.model}/${v.version}`}>
                    <td className={tdClass}>
                      <Link href={`/models/${v.model}`} className={`font-mono text-xs ${linkClass}`}>
                        {v.model}
                      </Link>
                    </td>
                    <td className={tdClass}>
                      <Link href={`/models/${v.model}/versions/${v.version}`} className={linkClass}>
                        v{v.version}
                      </Link>
                    </td>
                    <td className={tdClass}>
                      <StateBadge state={v.state} />
                    </td>
                    <td className={`${tdClass} font-mono text-xs`}>
                      {v.order}, {v.termCount}
                    </td>
                    <td className={`${tdClass} whitespace-nowrap font-mono text-xs`}>{formatTime(v.createdAt)}</td>
                    <td className={`${tdClass} text-xs`}>
                      {use ? `${use.tokens === 1 ? "1 token" : `${use.tokens} tokens`} of ${use.people === 1 ? "1 person" : `${use.people} people`}` : "none"}
                    </td>
                    <td className={`${tdClass} text-xs`}>
                      {v.retirement ? (
                        <>
                          <span data-testid="retirement-summary">
                            {formatTime(v.retirement.retiredAt)}: {v.retirement.reason}; sunset {formatTime(v.retirement.sunsetAt)}
                            {v.retirement.successorVersion !== null && `; successor v${v.retirement.successorVersion}`}
                          </span>
                          {just.success && just.data.version === `${v.model}/${v.version}` && <RetiredStatus notices={just.data.notices} />}
                        </>
                      ) : v.state === "released" ? (
                        <RetireForm
                          slug={v.model}
                          version={v.version}
                          successors={siblings(v).map((s) => ({ version: s.version, state: s.state }))}
                          defaultSunset={defaultSunset}
                          audience={audience}
                        />
                      ) : (
                        <span className="text-muted">only a released version can be retired</span>
                      )}
                    </td>
                  </tr>
                );
              })}
            </tbody>
          </table>
        </div>
      )}
    </section>
  );
}
