import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { linkClass } from "@/components/empty-state";
import { PageHeading } from "@/components/page-heading";
import { orNotFound, requirePageActor } from "@/components/server/page";
import { can } from "@/lib/access/actor";
import { getRun } from "@/lib/db/runs";
import { RunProgress } from "./run-progress";

type Params = Promise<{ id: string }>;

export async function generateMetadata({ params }: { params: Params }): Promise<Metadata> {
  return { title: `Run ${(await params).id}` };
}

export default async function RunPage({ params }: { params: Params }) {
  const { id: raw } = await params;
  if (!/^[1-9]\d{0,14}$/.test(raw)) notFound();
  const { user, actor } = await requirePageActor();
  const run = await orNotFound(getRun(actor, Number(raw)));
  const mayCancel = (run.createdBy === user.email && can(actor, "train", run.model)) || can(actor, "admin");
  return (
    <section aria-labelledby="run-heading">
      <p className="text-xs text-muted">
        <Link href="/" className={linkClass}>
          Catalogue
        </Link>{" "}
        /{" "}
        <Link href={`/models/${run.model}`} className={`font-mono ${linkClass}`}>
          {run.model}
        </Link>{" "}
        / runs
      </p>
      <PageHeading id="run-heading" title={`${run.kind === "training" ? "Training" : run.kind === "pruning" ? "Pruning" : "Monte Carlo"} run #${run.id}`} />
      <RunProgress initial={run} mayCancel={mayCancel} />
    </section>
  );
}
