import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { linkClass } from "@/components/empty-state";
import { PageHeading } from "@/components/page-heading";
import { orNotFound, requirePageActor } from "@/components/server/page";
import { StateBadge } from "@/components/state-badge";
import { StandingNotice } from "@/components/standing-notice";
import { evaluatesVersionState, getVersion } from "@/lib/db/versions";
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
  if (!/^[1-9]\d{0,8}$/.test(raw)) notFound();
  const { actor } = await requirePageActor();
  const v = await orNotFound(getVersion(actor, slug, Number(raw)));
  const analysable = evaluatesVersionState(actor, v.state);
  return (
    <div className="flex flex-col gap-4">
      <div>
        <p className="text-xs text-muted">
          <Link href="/" className={linkClass}>
            Catalogue
          </Link>{" "}
          /{" "}
          <Link href={`/models/${slug}`} className={`font-mono ${linkClass}`}>
            {slug}
          </Link>{" "}
          /{" "}
          <Link href={`/models/${slug}/versions/${v.version}`} className={linkClass}>
            version {v.version}
          </Link>
        </p>
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
