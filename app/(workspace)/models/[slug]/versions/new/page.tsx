import type { Metadata } from "next";
import Link from "next/link";
import { linkClass } from "@/components/empty-state";
import { formatIndexList } from "@/components/format";
import { ModelTrail } from "@/components/model-trail";
import { PageHeading } from "@/components/page-heading";
import { orNotFound, requirePageActor } from "@/components/server/page";
import { listGeneratingSets } from "@/lib/db/generatingSets";
import { getModel } from "@/lib/db/models";
import { TrainingForm } from "./training-form";
import { UploadPanel } from "./upload-panel";

export const metadata: Metadata = { title: "Train a version" };

type Params = Promise<{ slug: string }>;

export default async function NewVersionPage({ params }: { params: Params }) {
  const { slug } = await params;
  const { actor } = await requirePageActor("modeller");
  const model = await orNotFound(getModel(actor, slug));
  const sets = await listGeneratingSets(actor, slug);
  const setOptions = sets.map((s) => ({ id: s.id, label: `#${s.id} · ${s.samples} samples · ${s.fileName ?? "unnamed"}`, samples: s.samples }));
  const { setup } = model.setup;
  return (
    <section aria-labelledby="train-heading">
      <ModelTrail slug={slug} />
      <PageHeading id="train-heading" title="Train a new version" />
      <p className="mb-4 max-w-3xl text-sm text-muted">
        The new version is fitted for {model.name}: setup “{model.setup.name}” ({setup.farField.pointsPerAxis}² nodes, pupil{" "}
        {setup.pupilSamples}²) and the Zernike set{" "}
        <span className="font-mono">
          {model.zernike.ordering === "noll" ? "Noll" : "ANSI"} {formatIndexList(model.zernike.indices)}
        </span>{" "}
        ({model.zernike.indices.length} terms), fixed when the model was registered; for another set,{" "}
        <Link href={`/models/new?setupId=${model.setupId}`} className={linkClass}>
          register a new model
        </Link>
        . The run is queued for the training workers and its progress is shown live.
      </p>
      <div className="grid gap-6 lg:grid-cols-[minmax(0,34rem)_1fr]">
        <TrainingForm slug={slug} termCountJ={model.zernike.indices.length} generatingSets={setOptions} />
        <UploadPanel slug={slug} nollCount={model.zernike.indices.length} pointsPerAxis={setup.farField.pointsPerAxis} />
      </div>
    </section>
  );
}
