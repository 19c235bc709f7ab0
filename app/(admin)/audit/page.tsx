import type { Metadata } from "next";
import Link from "next/link";
import { EmptyState, linkClass, quietButtonClass, tdClass, thClass } from "@/components/empty-state";
import { formatTime } from "@/components/format";
import { inputClass } from "@/components/forms/field";
import { FilterSelect } from "@/components/forms/filter-select";
import { PageHeading } from "@/components/page-heading";
import { requirePageActor } from "@/components/server/page";
import { auditActions, listAuditEvents } from "@/lib/db/audit";
import { listUsers } from "@/lib/db/users";
import { auditQuerySchema } from "@/lib/validation/audit";

export const metadata: Metadata = { title: "Audit log" };

type SearchParams = Promise<Record<string, string | string[] | undefined>>;

const PAGE_SIZE = 50;

function query(params: Record<string, string | undefined>): string {
  const search = new URLSearchParams();
  for (const [k, v] of Object.entries(params)) if (v) search.set(k, v);
  const text = search.toString();
  return text ? `?${text}` : "";
}

/** Who did what, when and from where (admins): filterable by person, action and subject, paged, exportable as CSV. */
export default async function AuditPage({ searchParams }: { searchParams: SearchParams }) {
  const { actor } = await requirePageActor("admin");
  const raw = await searchParams;
  const flat = Object.fromEntries(Object.entries(raw).map(([k, v]) => [k, Array.isArray(v) ? v[0] : v])) as Record<string, string | undefined>;
  const parsed = auditQuerySchema.safeParse({ person: flat.person, action: flat.action, subject: flat.subject, cursor: flat.cursor || null, limit: PAGE_SIZE });
  const filters = parsed.success ? parsed.data : auditQuerySchema.parse({ limit: PAGE_SIZE });
  const problem = parsed.success ? null : `${parsed.error.issues[0]?.message ?? "Those filters cannot be read"}; showing every event instead.`;
  const [page, people, actions] = await Promise.all([listAuditEvents(actor, filters), listUsers(), auditActions(actor)]);
  const kept = { person: filters.person, action: filters.action, subject: filters.subject };

  return (
    <section aria-labelledby="audit-heading">
      <PageHeading id="audit-heading" title="Audit log">
        <a href={`/audit/export${query(kept)}`} className={quietButtonClass} download data-testid="audit-export">
          Export CSV
        </a>
      </PageHeading>
      <form method="get" className="mb-4 flex flex-wrap items-end gap-3 text-sm" aria-label="Filter the audit log">
        <FilterSelect name="person" label="Person" value={filters.person} anyLabel="anybody" options={people.map((p) => p.email)} />
        <label className="flex flex-col gap-1">
          <span className="text-xs text-muted">Action (with its sub-actions)</span>
          <input name="action" list="audit-actions" defaultValue={filters.action ?? ""} className={inputClass} placeholder="token" />
          <datalist id="audit-actions">
            {actions.map((a) => (
              <option key={a} value={a} />
            ))}
          </datalist>
        </label>
        <label className="flex flex-col gap-1">
          <span className="text-xs text-muted">Subject (type or type:id)</span>
          <input name="subject" defaultValue={filters.subject ?? ""} className={inputClass} placeholder="model_version:2" />
        </label>
        <button type="submit" className={quietButtonClass}>
          Filter
        </button>
        <Link href="/audit" className={`text-xs ${linkClass}`}>
          clear
        </Link>
      </form>
      {problem && (
        <p role="status" className="mb-3 text-sm text-caution">
          {problem}
        </p>
      )}
      {page.items.length === 0 ? (
        <EmptyState title="No event matches these filters." testId="audit-empty" />
      ) : (
        <div className="overflow-x-auto">
          <table className="w-full border-collapse bg-surface text-sm" data-testid="audit-table">
            <caption className="sr-only">Audit events, newest first</caption>
            <thead>
              <tr className="border-b border-line text-left text-xs text-muted">
                <th scope="col" className={thClass}>When (UTC)</th>
                <th scope="col" className={thClass}>Who</th>
                <th scope="col" className={thClass}>Action</th>
                <th scope="col" className={thClass}>Subject</th>
                <th scope="col" className={thClass}>From</th>
                <th scope="col" className={thClass}>Detail</th>
              </tr>
            </thead>
            <tbody>
              {page.items.map((e) => (
                <tr key={e.id} className="border-b border-line align-top last:border-0" data-audit-id={e.id}>
                  <td className={`${tdClass} whitespace-nowrap font-mono text-xs`}>{formatTime(e.occurredAt, true)}</td>
                  <td className={`${tdClass} text-xs`}>
                    {e.actorEmail ? (
                      <Link href={`/audit${query({ ...kept, person: e.actorEmail })}`} className={linkClass}>
                        {e.actorEmail}
                      </Link>
                    ) : (
                      <span className="text-muted">nobody signed in</span>
                    )}
                  </td>
                  <td className={`${tdClass} font-mono text-xs`}>{e.action}</td>
                  <td className={`${tdClass} font-mono text-xs`}>
                    {e.subjectType ? (
                      <Link href={`/audit${query({ ...kept, subject: e.subjectId ? `${e.subjectType}:${e.subjectId}` : e.subjectType })}`} className={linkClass}>
                        {e.subjectType}
                        {e.subjectId ? `:${e.subjectId}` : ""}
                      </Link>
                    ) : (
                      "–"
                    )}
                  </td>
                  <td className={`${tdClass} font-mono text-xs`} data-testid="audit-address">{e.clientAddress ?? "–"}</td>
                  <td className={`${tdClass} max-w-md break-words font-mono text-xs text-muted`}>{e.detail ? JSON.stringify(e.detail) : ""}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
      <nav aria-label="Pages of the audit log" className="mt-3 flex gap-3 text-sm">
        {filters.cursor !== null && (
          <Link href={`/audit${query(kept)}`} className={linkClass}>
            Newest
          </Link>
        )}
        {page.nextCursor !== null && (
          <Link href={`/audit${query({ ...kept, cursor: page.nextCursor })}`} className={linkClass} data-testid="audit-older">
            Older events
          </Link>
        )}
      </nav>
    </section>
  );
}
