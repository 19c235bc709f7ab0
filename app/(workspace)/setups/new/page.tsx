import type { Metadata } from "next";
import Link from "next/link";
import { linkClass } from "@/components/empty-state";
import { PageHeading } from "@/components/page-heading";
import { requirePageActor } from "@/components/server/page";
import { VELORA_SETUP } from "@/lib/demo/velora";
import { SetupForm } from "./setup-form";

export const metadata: Metadata = { title: "New setup" };

export default async function NewSetupPage() {
  await requirePageActor("modeller");
  return (
    <section aria-labelledby="new-setup-heading">
      <PageHeading id="new-setup-heading" title="New optical setup">
        <Link href="/setups" className={`text-sm ${linkClass}`}>
          All setups
        </Link>
      </PageHeading>
      <p className="mb-4 max-w-3xl text-sm text-muted">
        The form starts from the Velora transmit telescope. Every value is checked as you type and again on the server;
        the derived quantities follow the fields. A setup cannot be edited once saved: models and their versions refer to it.
      </p>
      <SetupForm initial={VELORA_SETUP} />
    </section>
  );
}
