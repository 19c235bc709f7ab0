import type { Metadata } from "next";
import { PageHeading } from "@/components/page-heading";
import { RoleList } from "@/components/role-list";
import { requirePageUser } from "@/lib/auth/page";
import { listCatalogue } from "@/lib/db/models";
import { CatalogueTable } from "./catalogue-table";

export const metadata: Metadata = { title: "Catalogue" };

export default async function HomePage() {
  const user = await requirePageUser();
  const catalogue = await listCatalogue();
  return (
    <div className="grid gap-6 lg:grid-cols-[1fr_18rem]">
      <section aria-labelledby="catalogue-heading">
        <PageHeading id="catalogue-heading" title="Model catalogue">
          <span className="text-sm text-muted">
            {catalogue.length} {catalogue.length === 1 ? "model" : "models"}
          </span>
        </PageHeading>
        <CatalogueTable entries={catalogue} />
      </section>
      <aside aria-labelledby="identity-heading" className="self-start rounded border border-line bg-surface p-4">
        <h2 id="identity-heading" className="text-xs font-medium uppercase tracking-wide text-muted">
          Signed in as
        </h2>
        <p className="mt-2 font-medium" data-testid="user-name">
          {user.name}
        </p>
        <p className="text-sm text-muted">{user.email}</p>
        <div className="mt-3">
          <RoleList roles={user.roles} />
        </div>
      </aside>
    </div>
  );
}
