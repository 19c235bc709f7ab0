import type { Metadata } from "next";
import Link from "next/link";
import { buttonLinkClass, EmptyState, linkClass } from "@/components/empty-state";
import { PageHeading } from "@/components/page-heading";
import { RoleList } from "@/components/role-list";
import { requirePageActor } from "@/components/server/page";
import { can } from "@/lib/access/actor";
import { listModels } from "@/lib/db/models";
import { listSetups } from "@/lib/db/setups";
import { modelListQuerySchema, VERSION_STATES } from "@/lib/validation/registry";
import { CatalogueTable } from "./catalogue-table";

export const metadata: Metadata = { title: "Catalogue" };

type SearchParams = Promise<Record<string, string | string[] | undefined>>;

const CATALOGUE_PAGE = 100;

export default async function CataloguePage({ searchParams }: { searchParams: SearchParams }) {
  const { user, actor } = await requirePageActor();
  const raw = await searchParams;
  const given = Object.fromEntries(
    Object.entries(raw).flatMap(([key, value]) => {
      const v = Array.isArray(value) ? value[0] : value;
      return v === undefined || v === "" ? [] : [[key, v]];
    }),
  );
  const parsed = modelListQuerySchema.safeParse({ ...given, limit: String(CATALOGUE_PAGE) });
  const query = parsed.success ? parsed.data : modelListQuerySchema.parse({ limit: String(CATALOGUE_PAGE) });
  const [models, setups] = await Promise.all([
    listModels(actor, { q: query.q, state: query.state, setupId: query.setupId }, { limit: query.limit, cursor: query.cursor }),
    listSetups(actor, { limit: 500, cursor: null }),
  ]);
  const setupNames = new Map(setups.items.map((s) => [s.id, s.name]));
  const filtered = Boolean(query.q || query.state || query.setupId);
  const mayTrain = can(actor, "train");
  const nextHref = models.nextCursor
    ? `/?${new URLSearchParams({ ...given, cursor: models.nextCursor }).toString()}`
    : null;

  return (
    <div className="grid gap-6 xl:grid-cols-[1fr_16rem]">
    <section aria-labelledby="catalogue-heading" className="min-w-0">
      <PageHeading id="catalogue-heading" title="Model catalogue">
        {mayTrain && (
          <div className="flex gap-2">
            <Link href="/setups/new" className="rounded border border-line px-3 py-1.5 text-sm hover:bg-sunken">
              New setup
            </Link>
            <Link href="/models/new" className={buttonLinkClass}>
              New model
            </Link>
          </div>
        )}
      </PageHeading>

      <form method="get" role="search" aria-label="Filter models" className="mb-4 flex flex-wrap items-end gap-3 text-sm">
        <div className="flex flex-col gap-1">
          <label htmlFor="q" className="text-xs font-medium text-muted">
            Search
          </label>
          <input
            id="q"
            name="q"
            type="search"
            defaultValue={query.q ?? ""}
            placeholder="name, slug or description"
            className="w-72 rounded border border-line bg-surface px-2 py-1"
          />
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="state" className="text-xs font-medium text-muted">
            Has a version that is
          </label>
          <select id="state" name="state" defaultValue={query.state ?? ""} className="rounded border border-line bg-surface px-2 py-1">
            <option value="">any state</option>
            {VERSION_STATES.map((s) => (
              <option key={s} value={s}>
                {s}
              </option>
            ))}
          </select>
        </div>
        <div className="flex flex-col gap-1">
          <label htmlFor="setupId" className="text-xs font-medium text-muted">
            Setup
          </label>
          <select id="setupId" name="setupId" defaultValue={query.setupId ?? ""} className="rounded border border-line bg-surface px-2 py-1">
            <option value="">any setup</option>
            {setups.items.map((s) => (
              <option key={s.id} value={s.id}>
                {s.name}
              </option>
            ))}
          </select>
        </div>
        <button type="submit" className="rounded border border-line bg-surface px-3 py-1 hover:bg-sunken">
          Apply
        </button>
        {filtered && (
          <Link href="/" className={`py-1 ${linkClass}`}>
            Clear filters
          </Link>
        )}
        <span className="ml-auto py-1 text-muted" role="status">
          {models.items.length} {models.items.length === 1 ? "model" : "models"}
          {filtered ? " match" : ""}
        </span>
      </form>
      {!parsed.success && (
        <p role="alert" className="mb-3 text-sm text-fault">
          {parsed.error.issues[0]?.message}; showing every model instead.
        </p>
      )}

      {models.items.length === 0 ? (
        filtered ? (
          <EmptyState title="No model matches these filters." testId="catalogue-empty">
            Widen the search or <Link href="/" className={linkClass}>clear the filters</Link>.
          </EmptyState>
        ) : (
          <EmptyState title="No models in the catalogue yet." testId="catalogue-empty">
            {mayTrain ? (
              <>
                Define an optical setup, then register a model on it:{" "}
                <Link href="/setups/new" className={linkClass}>
                  new setup
                </Link>
                .
              </>
            ) : (
              "A model appears here once a modeller registers it against an optical setup."
            )}
          </EmptyState>
        )
      ) : (
        <CatalogueTable models={models.items} setupNames={setupNames} />
      )}
      {nextHref && (
        <p className="mt-3 text-sm">
          <Link href={nextHref} className={linkClass}>
            Next {CATALOGUE_PAGE} models
          </Link>
        </p>
      )}
    </section>
      <aside aria-labelledby="identity-heading" className="self-start rounded border border-line bg-surface p-3 text-sm">
        <h2 id="identity-heading" className="text-xs font-medium uppercase tracking-wide text-muted">
          Signed in as
        </h2>
        <p className="mt-1 font-medium" data-testid="user-name">
          {user.name}
        </p>
        <p className="text-xs text-muted">{user.email}</p>
        <div className="mt-2">
          <RoleList roles={user.roles} />
        </div>
        <p className="mt-3 border-t border-line pt-2 text-xs text-muted">
          Scripts reach the same registry through the REST API with a{" "}
          <Link href="/tokens" className={linkClass}>
            token
          </Link>
          .
        </p>
      </aside>
    </div>
  );
}
