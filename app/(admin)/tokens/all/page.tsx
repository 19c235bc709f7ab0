import type { Metadata } from "next";
import { z } from "zod";
import { EmptyState, quietButtonClass } from "@/components/empty-state";
import { FilterSelect } from "@/components/forms/filter-select";
import { PageHeading } from "@/components/page-heading";
import { requirePageActor } from "@/components/server/page";
import { TOKEN_SCOPES } from "@/lib/access/actor";
import { listTokens, TOKEN_STATES } from "@/lib/db/tokens";
import { listUsers } from "@/lib/db/users";
import { TokenTable } from "@/components/token-table";

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
        <FilterSelect name="owner" label="Owner" value={filter.owner} anyLabel="everybody" options={people.map((p) => p.email)} />
        <FilterSelect name="state" label="State" value={filter.state} anyLabel="any" options={TOKEN_STATES} />
        <FilterSelect name="scope" label="Scope" value={filter.scope} anyLabel="any" options={TOKEN_SCOPES} />
        <button type="submit" className={quietButtonClass}>
          Filter
        </button>
      </form>
      {tokens.length === 0 ? (
        <EmptyState title="No token matches these filters." testId="all-tokens-empty" />
      ) : (
        <TokenTable tokens={tokens} now={now} showOwner caption="Every person's API tokens (their secrets are never shown)" testId="all-tokens-table" />
      )}
    </section>
  );
}
