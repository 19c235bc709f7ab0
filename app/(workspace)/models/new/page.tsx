import type { Metadata } from "next";
import Link from "next/link";
import { EmptyState, linkClass } from "@/components/empty-state";
import { PageHeading } from "@/components/page-heading";
import { requirePageActor } from "@/components/server/page";
import { listSetups } from "@/lib/db/setups";
import { ModelForm } from "./model-form";

export const metadata: Metadata = { title: "New model" };

type SearchParams = Promise<Record<string, string | string[] | undefined>>;

export default async function NewModelPage({ searchParams }: { searchParams: SearchParams }) {
  const { actor } = await requirePageActor("modeller");
  const params = await searchParams;
  const setups = await listSetups(actor, { limit: 500, cursor: null });
  const wanted = Number(Array.isArray(params.setupId) ? params.setupId[0] : params.setupId);
  const chosen = setups.items.find((s) => s.id === wanted) ?? setups.items[setups.items.length - 1];
  return (
    <section aria-labelledby="new-model-heading">
      <PageHeading id="new-model-heading" title="New model" />
      {setups.items.length === 0 ? (
        <EmptyState title="A model needs an optical setup first.">
          <Link href="/setups/new" className={linkClass}>
            Define a setup
          </Link>{" "}
          and come back here.
        </EmptyState>
      ) : (
        <>
          <p className="mb-4 max-w-3xl text-sm text-muted">
            A model is one family of surrogate versions: one setup and one Zernike set, fixed for all its versions. After
            saving it you choose how its first version is trained.
          </p>
          <ModelForm setups={setups.items.map((s) => ({ id: s.id, name: s.name }))} initialSetupId={chosen.id} />
        </>
      )}
    </section>
  );
}
