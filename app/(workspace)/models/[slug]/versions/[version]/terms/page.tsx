import type { Metadata } from "next";
import { SectionHeading } from "@/components/empty-state";
import { formatTerm } from "@/components/format";
import { ModelTrail } from "@/components/model-trail";
import { PageHeading } from "@/components/page-heading";
import { orNotFound, requirePageVersion } from "@/components/server/page";
import { StandingNotice } from "@/components/standing-notice";
import { VELORA_JITTER_NRAD } from "@/lib/demo/velora";
import { getModel } from "@/lib/db/models";
import { loadSurrogate } from "@/lib/db/versions";
import { thetaGridNrad } from "@/lib/optics/setup";
import { termSignificance } from "@/lib/surrogate/significance";
import { termLabel } from "@/lib/surrogate/terms";
import { TermMaps, TermRanking } from "./term-plots";

type Params = Promise<{ slug: string; version: string }>;
type SearchParams = Promise<Record<string, string | string[] | undefined>>;

export async function generateMetadata({ params }: { params: Params }): Promise<Metadata> {
  const { slug, version } = await params;
  return { title: `${slug} v${version} coefficients` };
}

const one = (value: string | string[] | undefined) => (typeof value === "string" ? value : undefined);

/** A number typed into the form, or the default when the field is empty or absent. */
function numberParam(value: string | undefined, fallback: number): number {
  return value === undefined || value.trim() === "" ? fallback : Number(value);
}

export default async function CoefficientsPage({ params, searchParams }: { params: Params; searchParams: SearchParams }) {
  const [{ slug, version: raw }, query] = await Promise.all([params, searchParams]);
  const { actor, version: v } = await requirePageVersion(slug, raw);
  const model = await orNotFound(getModel(actor, slug));
  const { surrogate } = await loadSurrogate(actor, slug, v.version);

  // Defaults: the budget a pruned version was made for, else the validity limit (rounded down to 0.1 nm, so the form
  // shows a number a person would type and the budget stays inside the validity range); its jitter, else the demo's.
  const validityBudgetNm = Math.floor(v.validity.maxTotalRmsNm * 10) / 10 || v.validity.maxTotalRmsNm;
  const defaults = { budgetRmsNm: v.pruning?.budgetRmsNm ?? validityBudgetNm, jitterNrad: v.pruning?.jitterNrad ?? VELORA_JITTER_NRAD };
  const asked = { budgetRmsNm: numberParam(one(query.budget), defaults.budgetRmsNm), jitterNrad: numberParam(one(query.jitter), defaults.jitterNrad) };
  let options = asked;
  let optionsError: string | null = null;
  let ranking;
  try {
    ranking = termSignificance(surrogate, asked);
  } catch (caught) {
    if (!(caught instanceof RangeError)) throw caught;
    optionsError = `${caught.message}; showing the ranking for ${defaults.budgetRmsNm} nm RMS and ${defaults.jitterNrad} nrad instead.`;
    options = defaults;
    ranking = termSignificance(surrogate, defaults);
  }

  const asKey = one(query.term) ?? "1";
  let t = surrogate.terms.findIndex((term) => termLabel(term) === asKey);
  const termError = t < 0 ? `This version has no term ${asKey}; showing the constant term.` : null;
  if (t < 0) t = 0;
  const M = surrogate.pointsPerAxis;
  const P = 2 * M * M;
  const term = surrogate.terms[t];
  const maps = {
    x: Array.from(surrogate.coefficients.subarray(t * P, t * P + M * M)),
    y: Array.from(surrogate.coefficients.subarray(t * P + M * M, (t + 1) * P)),
  };
  const theta = Array.from(thetaGridNrad(v.setup.farField));
  const versionName = `${slug} v${v.version}`;

  return (
    <div className="flex flex-col gap-6">
      <div>
        <ModelTrail slug={slug} version={v.version} />
        <PageHeading title={`${model.name} · version ${v.version} · coefficients`} />
        <p className="max-w-3xl text-sm text-muted">
          A version&apos;s map is <span className="font-mono">c(θ) = C(θ) + Σ A_i(θ) a_i + Σ B_ij(θ) a_i a_j</span> over the Zernike
          coefficients <span className="font-mono">a</span> (nm RMS, Noll). Pick a term to see its coefficient map on both axes; the
          ranking below bounds what each term can add within a wavefront error budget.
        </p>
      </div>

      <section aria-labelledby="term-heading" className="flex flex-col gap-2">
        <SectionHeading id="term-heading">Coefficient map of one term</SectionHeading>
        {termError && (
          <p role="alert" className="text-sm text-caution" data-testid="term-error">
            {termError}
          </p>
        )}
        <TermMaps
          terms={surrogate.terms.map((tm) => ({ key: termLabel(tm), name: formatTerm(tm), degree: tm.length }))}
          chosen={termLabel(term)}
          name={formatTerm(term)}
          degree={term.length}
          thetaNrad={theta}
          mapX={maps.x}
          mapY={maps.y}
          version={versionName}
        />
      </section>

      <section aria-labelledby="ranking-heading" className="flex flex-col gap-2">
        <SectionHeading id="ranking-heading">Largest possible contribution of every term</SectionHeading>
        <form method="get" className="flex flex-wrap items-end gap-3 text-sm" data-testid="significance-form">
          <input type="hidden" name="term" value={termLabel(term)} />
          <label className="flex flex-col gap-1">
            <span className="text-xs text-muted">WFE budget (nm RMS)</span>
            <input name="budget" type="number" step="any" defaultValue={String(asked.budgetRmsNm)} className="w-28 rounded border border-line bg-surface px-2 py-1 font-mono" />
          </label>
          <label className="flex flex-col gap-1">
            <span className="text-xs text-muted">jitter (nrad)</span>
            <input name="jitter" type="number" step="any" defaultValue={String(asked.jitterNrad)} className="w-28 rounded border border-line bg-surface px-2 py-1 font-mono" />
          </label>
          <button type="submit" className="rounded border border-line px-3 py-1 hover:bg-sunken">
            Rank
          </button>
        </form>
        {optionsError && (
          <p role="alert" className="text-sm text-caution" data-testid="significance-error">
            {optionsError}
          </p>
        )}
        <TermRanking
          ranking={ranking.map((r) => ({ key: r.label, name: formatTerm(r.term), degree: r.degree, maxAbsCoefficient: r.maxAbsCoefficient, ttlBoundPmPerNrad: r.ttlBoundPmPerNrad, noiseBoundPm: r.noiseBoundPm }))}
          budgetRmsNm={options.budgetRmsNm}
          jitterNrad={options.jitterNrad}
          version={versionName}
        />
      </section>
      <StandingNotice />
    </div>
  );
}
