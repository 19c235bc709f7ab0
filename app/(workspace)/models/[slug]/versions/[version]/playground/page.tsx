import type { Metadata } from "next";
import { ModelTrail } from "@/components/model-trail";
import { PageHeading } from "@/components/page-heading";
import { evaluableModels } from "@/components/server/pickable-models";
import { requirePageVersion } from "@/components/server/page";
import { StateBadge } from "@/components/state-badge";
import { evaluatesVersionState } from "@/lib/db/versions";
import { thetaGridNrad } from "@/lib/optics/setup";
import { toNollIndices } from "@/lib/optics/zernike";
import { Playground } from "./playground";

type Params = Promise<{ slug: string; version: string }>;

export async function generateMetadata({ params }: { params: Params }): Promise<Metadata> {
  const { slug, version } = await params;
  return { title: `Playground · ${slug} v${version}` };
}

export default async function PlaygroundPage({ params }: { params: Params }) {
  const { slug, version: raw } = await params;
  const { actor, version: v } = await requirePageVersion(slug, raw);
  const { models } = await evaluableModels(actor);
  const evaluable = evaluatesVersionState(actor, v.state);
  const sunsetPassed = v.retirement !== null && Date.parse(v.retirement.sunsetAt) <= Date.now();

  return (
    <div className="flex flex-col gap-4">
      <div>
        <ModelTrail slug={slug} version={v.version} />
        <PageHeading title={`Evaluate playground · ${slug} v${v.version}`}>
          <StateBadge state={v.state} />
        </PageHeading>
      </div>
      {!evaluable || sunsetPassed ? (
        <p className="rounded border border-caution px-3 py-2 text-sm text-caution" data-testid="not-evaluable">
          {sunsetPassed
            ? `Version ${v.version} was retired and its sunset (${v.retirement!.sunsetAt.slice(0, 10)}) has passed: it is no longer evaluated.`
            : `Version ${v.version} is ${v.state}: only signed-in modellers and reviewers evaluate drafts and versions in review.`}{" "}
          Pick another version in the catalogue.
        </p>
      ) : (
        <Playground
          slug={slug}
          version={v.version}
          ordering={v.zernike.ordering}
          indices={v.zernike.indices}
          nollIndices={toNollIndices(v.zernike)}
          validity={v.validity}
          thetaNrad={Array.from(thetaGridNrad(v.setup.farField))}
          order={v.order}
          termCount={v.termCount}
          models={models}
        />
      )}
    </div>
  );
}
