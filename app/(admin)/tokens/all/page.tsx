import type { Metadata } from "next";
import { z } from "zod";
import { EmptyState, quietButtonClass, tdClass, thClass } from "@/components/empty-state";
import { formatTime } from "@/components/format";
import { selectClass } from "@/components/forms/field";
import { PageHeading } from "@/components/page-heading";
import { requirePageActor } from "@/components/server/page";
import { TOKEN_SCOPES } from "@/lib/access/actor";
import { listTokens, TOKEN_STATES } from "@/lib/db/tokens";
import { listUsers } from "@/lib/db/users";
import { RevokeButton } from "@/app/(workspace)/tokens/revoke-button";

export const metadata: Metadata = { title: "All tokens" };

type SearchParams = Promise<Record<string, string | string[] | undefined>>;

const filterSchema = z.object({
  owner: z.email().optional().catch(undefined),
  state: z.enum(TOKEN_STATES).optional().catch(undefined),
  scope: z.enum(TOKEN_SCOPES).optional().catch(undefined),
});

const one = (v: string | string[] | undefined) => (Array.isArray(v) ? v[0] : v) || undefined;

/** Every token of every person (admins), filterable by owner, state and scope; each revocable. */
export default async function AllTokensPage({ searchParams }: { searchParams: SearchParams }) {
  const { actor } = await requirePageActor("admin");
  const params = await searchParams;
  const filter = filterSchema.parse({ owner: one(params.owner), state: one(params.state), scope: one(params.scope) });
  const now = new Date();
  const [tokens, people] = await Promise.all([listTokens(actor, { all: true, ...filter, now }), listUsers()]);
  return (
    <section aria-labelledby="all-tokens-heading">
      <PageHeading id="all-tokens-heading" title="All tokens">
        <span className="text-sm text-muted">{tokens.length === 1 ? "1 token" : `${tokens.length} tokens`}</span>
      </PageHeading>
      <form method="get" className="mb-4 flex flex-wrap items-end gap-3 text-sm" aria-label="Filter tokens">
        <label className="flex flex-col gap-1">
          <span className="text-xs text-muted">Owner</span>
          <select name="owner" defaultValue={filter.owner ?? ""} className={selectClass}>
            <option value="">everybody</option>
            {people.map((p) => (
              <option key={p.id} value={p.email}>
                {p.email}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col gap-1">
          <span className="text-xs text-muted">State</span>
          <select name="state" defaultValue={filter.state ?? ""} className={selectClass}>
            <option value="">any</option>
            {TOKEN_STATES.map((s) => (
              <option key={s} value={s}>
                {s}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col gap-1">
          <span className="text-xs text-muted">Scope</span>
          <select name="scope" defaultValue={filter.scope ?? ""} className={selectClass}>
            <option value="">any</option>
            {TOKEN_SCOPES.map((s) => (
              <option key={s} value={s}>
                {s}
              </option>
            ))}
          </select>
        </label>
        <button type="submit" className={quietButtonClass}>
          Filter
        </button>
      </form>
      {tokens.length === 0 ? (
        <EmptyState title="No token matches these filters." testId="all-tokens-empty" />
      ) : (
        <div className="overflow-x-auto">
          <table className="w-full border-collapse bg-surface text-sm" data-testid="all-tokens-table">
            <caption className="sr-only">Every person&apos;s API tokens (their secrets are never shown)</caption>
            <thead>
              <tr className="border-b border-line text-left text-xs text-muted">
                <th scope="col" className={thClass}>Owner</th>
                <th scope="col" className={thClass}>Name</th>
                <th scope="col" className={thClass}>Starts with</th>
                <th scope="col" className={thClass}>Scopes</th>
                <th scope="col" className={thClass}>Models</th>
                <th scope="col" className={thClass}>Expires (UTC)</th>
                <th scope="col" className={thClass}>Last used</th>
                <th scope="col" className={`${thClass} text-right`}>Uses</th>
                <th scope="col" className={thClass}>State</th>
                <th scope="col" className={thClass}><span className="sr-only">Revoke</span></th>
              </tr>
            </thead>
            <tbody>
              {tokens
                .slice()
                .reverse()
                .map((t) => {
                  const expired = t.expiresAt !== null && Date.parse(t.expiresAt) <= now.getTime();
                  return (
                    <tr key={t.id} className="border-b border-line last:border-0" data-token-id={t.id}>
                      <td className={`${tdClass} text-xs`}>{t.owner}</td>
                      <td className={tdClass}>{t.name}</td>
                      <td className={`${tdClass} font-mono text-xs`}>{t.hint}</td>
                      <td className={`${tdClass} font-mono text-xs`}>{t.scopes.join(", ")}</td>
                      <td className={`${tdClass} font-mono text-xs`}>{t.models === null ? "every model" : t.models.join(", ")}</td>
                      <td className={`${tdClass} whitespace-nowrap font-mono text-xs`}>{t.expiresAt === null ? "never" : formatTime(t.expiresAt)}</td>
                      <td className={`${tdClass} whitespace-nowrap font-mono text-xs`}>{t.lastUsedAt === null ? "never" : formatTime(t.lastUsedAt)}</td>
                      <td className={`${tdClass} text-right font-mono text-xs`}>{t.useCount}</td>
                      <td className={`${tdClass} text-xs`} data-testid="token-state">
                        {t.revokedAt !== null ? (
                          <span className="text-muted">revoked {formatTime(t.revokedAt)}</span>
                        ) : expired ? (
                          <span className="text-muted">expired</span>
                        ) : (
                          <span className="text-good">active</span>
                        )}
                      </td>
                      <td className={tdClass}>{t.revokedAt === null && <RevokeButton id={t.id} name={t.name} />}</td>
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
