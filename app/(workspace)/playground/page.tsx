import { redirect } from "next/navigation";
import { EmptyState } from "@/components/empty-state";
import { PageHeading } from "@/components/page-heading";
import { evaluableModels } from "@/components/server/pickable-models";
import { requirePageActor } from "@/components/server/page";

/** The playground of the demo's released transmit model (or the first version the reader may evaluate). */
const DEFAULT_MODEL = "velora-transmit";

export default async function PlaygroundEntry() {
  const { actor } = await requirePageActor();
  const { models, latestReleased } = await evaluableModels(actor);
  const model = models.find((m) => m.slug === DEFAULT_MODEL && latestReleased.get(m.slug)) ?? models.find((m) => latestReleased.get(m.slug)) ?? models[0];
  if (model) {
    const version = latestReleased.get(model.slug) ?? model.versions[model.versions.length - 1].version;
    redirect(`/models/${model.slug}/versions/${version}/playground`);
  }
  return (
    <div>
      <PageHeading title="Evaluate playground" />
      <EmptyState title="There is no model version you may evaluate yet." testId="playground-empty">
        A modeller trains a version and a reviewer releases it; then it can be evaluated here.
      </EmptyState>
    </div>
  );
}
