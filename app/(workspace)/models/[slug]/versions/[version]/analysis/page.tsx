import type { Metadata } from "next";
import { ModelTrail } from "@/components/model-trail";
import { PageHeading } from "@/components/page-heading";
import { requirePageVersion } from "@/components/server/page";
import { StateBadge } from "@/components/state-badge";
import { StandingNotice } from "@/components/standing-notice";
import { evaluatesVersionState } from "@/lib/db/versions";
import { VELORA_JITTER_NRAD, VELORA_WFE_BUDGET_NM } from "@/lib/demo/velora";
import { AnalysisPanels } from "./analysis-panels";

type Params = Promise<{ slug: string; version: string }>;

export async function generateMetadata({ params }: { params: Params }): Promise<Metadata> {
  const { slug, version } = await params;
  return { title: `Analysis · ${slug} v${version}` };
}

/** The analyses of one version (API.md "Analysis"): each panel calls its route with the session and plots the answer. */
export default async function AnalysisPage({ params }: { params: Params }) {
  const { slug, version: raw } = await params;
  const { actor, version: v } = await requirePageVersion(slug, raw);
  const analysable = evaluatesVersionState(actor, v.state);
  return (
    <div className="flex flex-col gap-4">
      <div>
        <ModelTrail slug={slug} version={v.version} />
        <PageHeading title={`Analysis · ${slug} v${v.version}`}>
          <StateBadge state={v.state} />
        </PageHeading>
        <p className="mt-1 font-mono text-xs text-muted" data-testid="analysis-checksum">
          coefficients SHA-256 {v.coefficientsSha256}
        </p>
      </div>
      <StandingNotice />
      {analysable ? (
        <AnalysisPanels
          slug={slug}
          version={v.version}
          ordering={v.zernike.ordering}
          indices={v.zernike.indices}
          maxTotalRmsNm={v.validity.maxTotalRmsNm}
          apertureDiameterM={v.setup.apertureDiameterM}
          defaults={{ budgetRmsNm: VELORA_WFE_BUDGET_NM, jitterNrad: VELORA_JITTER_NRAD }}
        />
      ) : (
        <p className="rounded border border-caution px-3 py-2 text-sm text-caution" data-testid="not-analysable">
          Version {v.version} is {v.state}: only signed-in modellers and reviewers analyse drafts and versions in review.
        </p>
      )}
    </div>
  );
}
