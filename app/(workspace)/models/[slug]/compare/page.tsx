import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import type { ReactNode } from "react";
import { linkClass, SectionHeading, tdClass, thClass } from "@/components/empty-state";
import { formatNumber, formatTerm } from "@/components/format";
import { ModelTrail } from "@/components/model-trail";
import { PageHeading } from "@/components/page-heading";
import { orNotFound, requirePageActor } from "@/components/server/page";
import { StandingNotice } from "@/components/standing-notice";
import { StateBadge } from "@/components/state-badge";
import { VELORA_EXAMPLE_WAVEFRONT_NM } from "@/lib/demo/velora";
import { getModel } from "@/lib/db/models";
import { getVersion, listVersions, type VersionDetail } from "@/lib/db/versions";
import { thetaGridNrad } from "@/lib/optics/setup";
import { toNollIndices } from "@/lib/optics/zernike";
import { termLabel } from "@/lib/surrogate/terms";
import { validationCoefficients } from "@/lib/surrogate/train";
import { CompareMaps, type ValidationChoice } from "./compare-maps";

type Params = Promise<{ slug: string }>;
type SearchParams = Promise<Record<string, string | string[] | undefined>>;

export async function generateMetadata({ params }: { params: Params }): Promise<Metadata> {
  const { slug } = await params;
  return { title: `${slug}: compare versions` };
}

const versionParam = (value: string | string[] | undefined) => (typeof value === "string" && /^[1-9]\d{0,8}$/.test(value) ? Number(value) : null);

/** The seeded validation wavefronts of a version (regenerated from their seed, as training made them), if it had them. */
function validationWavefronts(v: VersionDetail, nollIndices: number[]): ValidationChoice[] {
  const spec = v.provenance.validationSet;
  if (!spec) return [];
  const coefficients = validationCoefficients(spec, nollIndices.length);
  const samples = v.statistics?.perSample;
  return Array.from({ length: spec.size }, (_, s) => {
    const row = coefficients.subarray(s * nollIndices.length, (s + 1) * nollIndices.length);
    return {
      key: `v${v.version}-${s}`,
      label: `v${v.version} validation wavefront ${s + 1}`,
      rmsNm: Math.hypot(...row),
      maxAbsErrorPmPerNrad: samples?.maxAbsErrorPmPerNrad[s] ?? null,
      coefficientsNm: Object.fromEntries(nollIndices.map((j, k) => [String(j), row[k]])),
    };
  });
}

function SideBySide({ rows, a, b }: { rows: [string, (v: VersionDetail) => ReactNode][]; a: VersionDetail; b: VersionDetail }) {
  return (
    <table className="w-full border-collapse bg-surface text-xs" data-testid="compare-facts">
      <caption className="sr-only">The two versions side by side</caption>
      <thead>
        <tr className="border-b border-line text-left text-muted">
          <th scope="col" className={thClass}></th>
          <th scope="col" className={thClass}>version {a.version}</th>
          <th scope="col" className={thClass}>version {b.version}</th>
        </tr>
      </thead>
      <tbody>
        {rows.map(([label, value]) => (
          <tr key={label} className="border-b border-line last:border-0">
            <th scope="row" className={`${tdClass} text-left font-normal text-muted`}>
              {label}
            </th>
            <td className={`${tdClass} font-mono`}>{value(a)}</td>
            <td className={`${tdClass} font-mono`}>{value(b)}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

function BandTable({ v }: { v: VersionDetail }) {
  if (!v.statistics) return <p className="text-xs text-muted">Version {v.version} has no validation statistics.</p>;
  return (
    <table className="w-full border-collapse bg-surface font-mono text-xs" data-testid={`bands-${v.version}`}>
      <caption className="mb-1 text-left font-sans text-xs text-muted">Version {v.version}: per band of total WFE</caption>
      <thead>
        <tr className="border-b border-line text-right font-sans text-muted">
          <th scope="col" className={`${thClass} text-left`}>nm RMS</th>
          <th scope="col" className={thClass}>n</th>
          <th scope="col" className={thClass}>max |error|</th>
          <th scope="col" className={thClass}>RMS error</th>
          <th scope="col" className={thClass}>max / peak</th>
        </tr>
      </thead>
      <tbody>
        {v.statistics.perRmsBin.map((b) => (
          <tr key={b.loNm} className="border-b border-line text-right last:border-0">
            <th scope="row" className={`${tdClass} text-left font-normal`}>
              {formatNumber(b.loNm, 3)} – {formatNumber(b.hiNm, 3)}
            </th>
            <td className={tdClass}>{b.samples}</td>
            <td className={tdClass}>{formatNumber(b.maxAbsErrorPmPerNrad, 3)}</td>
            <td className={tdClass}>{formatNumber(b.rmsErrorPmPerNrad, 3)}</td>
            <td className={tdClass}>{formatNumber(b.maxErrorRelativeToPeak * 100, 3)} %</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

function TermList({ title, terms, testId }: { title: string; terms: readonly (readonly number[])[]; testId: string }) {
  return (
    <details className="text-xs" data-testid={testId} data-count={terms.length} open={terms.length > 0 && terms.length <= 40}>
      <summary className="cursor-pointer text-sm">
        {title}: <span className="font-mono">{terms.length}</span>
      </summary>
      <p className="mt-1 break-words font-mono leading-5">{terms.length ? terms.map(formatTerm).join("  ") : "none"}</p>
    </details>
  );
}

export default async function ComparePage({ params, searchParams }: { params: Params; searchParams: SearchParams }) {
  const [{ slug }, query] = await Promise.all([params, searchParams]);
  const { actor } = await requirePageActor();
  const [model, versions] = await Promise.all([orNotFound(getModel(actor, slug)), orNotFound(listVersions(actor, slug))]);
  if (versions.length === 0) notFound();
  const numbers = versions.map((v) => v.version).sort((x, y) => x - y);
  const newest = numbers[numbers.length - 1];
  const aNumber = versionParam(query.a) ?? model.latestReleasedVersion ?? numbers[0];
  // B defaults to A's parent (a pruned version against its source), else the released version, else the newest other.
  const parent = versions.find((v) => v.version === aNumber)?.parentVersion ?? null;
  const released = model.latestReleasedVersion !== aNumber ? model.latestReleasedVersion : null;
  const bNumber = versionParam(query.b) ?? parent ?? released ?? (newest !== aNumber ? newest : numbers[0]);
  const [a, b] = await Promise.all([orNotFound(getVersion(actor, slug, aNumber)), orNotFound(getVersion(actor, slug, bNumber))]);
  const nollIndices = toNollIndices(model.zernike);
  const aKeys = new Set(a.terms.map(termLabel));
  const bKeys = new Set(b.terms.map(termLabel));
  const onlyA = a.terms.filter((t) => !bKeys.has(termLabel(t)));
  const onlyB = b.terms.filter((t) => !aKeys.has(termLabel(t)));
  const common = a.terms.filter((t) => bKeys.has(termLabel(t))).length;
  const sameSpec = JSON.stringify(a.provenance.validationSet) === JSON.stringify(b.provenance.validationSet);
  const validation = [...validationWavefronts(a, nollIndices), ...(sameSpec ? [] : validationWavefronts(b, nollIndices))];
  const overall = (v: VersionDetail, pick: (s: NonNullable<VersionDetail["statistics"]>["overall"]) => number, digits = 3) =>
    v.statistics ? formatNumber(pick(v.statistics.overall), digits) : "–";
  const selectClass = "rounded border border-line bg-surface px-2 py-1 font-mono text-xs";

  return (
    <div className="flex flex-col gap-6">
      <div>
        <ModelTrail slug={slug} />
        <PageHeading title={`${model.name} · version ${a.version} against version ${b.version}`} />
        <form method="get" className="flex flex-wrap items-end gap-3 text-sm" data-testid="compare-form">
          {(["a", "b"] as const).map((side) => (
            <label key={side} className="flex flex-col gap-1">
              <span className="text-xs text-muted">{side === "a" ? "Version A" : "Version B"}</span>
              <select name={side} defaultValue={String(side === "a" ? a.version : b.version)} className={selectClass}>
                {versions.map((v) => (
                  <option key={v.version} value={v.version}>
                    v{v.version} · {v.state} · order {v.order} · {v.termCount} terms
                  </option>
                ))}
              </select>
            </label>
          ))}
          <button type="submit" className="rounded border border-line px-3 py-1 hover:bg-sunken">
            Compare
          </button>
        </form>
        {a.version === b.version && <p className="mt-2 text-sm text-caution">Both sides are the same version: pick two different ones.</p>}
      </div>

      <div className="grid gap-6 lg:grid-cols-2">
        <section aria-labelledby="facts-heading">
          <SectionHeading id="facts-heading">Statistics</SectionHeading>
          <SideBySide
            a={a}
            b={b}
            rows={[
              ["State", (v) => <StateBadge state={v.state} />],
              ["Order", (v) => String(v.order)],
              ["Terms", (v) => `${v.termCount} (${v.terms.filter((t) => t.length === 1).length} linear, ${v.terms.filter((t) => t.length === 2).length} products)`],
              ["Generating set", (v) => `${v.provenance.design}, ${v.provenance.size} samples`],
              ["Validity limit", (v) => `${formatNumber(v.validity.maxTotalRmsNm)} nm RMS`],
              ["Validation samples", (v) => (v.statistics ? String(v.statistics.overall.samples) : "none")],
              ["Max |error| (pm/nrad)", (v) => overall(v, (o) => o.maxAbsErrorPmPerNrad)],
              ["RMS error (pm/nrad)", (v) => overall(v, (o) => o.rmsErrorPmPerNrad)],
              ["Max error / peak", (v) => (v.statistics ? `${formatNumber(v.statistics.overall.maxErrorRelativeToPeak * 100, 3)} %` : "–")],
              ["Condition number", (v) => formatNumber(v.fit.conditionNumber, 3)],
              ["Training residual (pm/nrad RMS)", (v) => formatNumber(v.fit.trainingResidualRmsPmPerNrad, 3)],
              ["Pruning", (v) => (v.pruning ? `from ${v.pruning.parentTermCount} terms, ≤ ${formatNumber(v.pruning.droppedTtlBoundPmPerNrad, 3)} pm/nrad dropped` : "none")],
            ]}
          />
          <p className="mt-2 text-xs">
            <Link href={`/models/${slug}/versions/${a.version}`} className={linkClass}>
              version {a.version}
            </Link>{" "}
            ·{" "}
            <Link href={`/models/${slug}/versions/${b.version}`} className={linkClass}>
              version {b.version}
            </Link>
          </p>
        </section>
        <section aria-labelledby="bands-heading" className="flex flex-col gap-3">
          <SectionHeading id="bands-heading">Error per band of total WFE (pm/nrad)</SectionHeading>
          <BandTable v={a} />
          <BandTable v={b} />
        </section>
      </div>

      <section aria-labelledby="terms-heading" className="flex flex-col gap-2">
        <SectionHeading id="terms-heading">Terms</SectionHeading>
        <p className="text-sm" data-testid="terms-summary">
          <span className="font-mono">{common}</span> terms in both; version {a.version} has {a.termCount}, version {b.version} has {b.termCount}.
        </p>
        <TermList title={`Only in version ${a.version}`} terms={onlyA} testId="only-a" />
        <TermList title={`Only in version ${b.version}`} terms={onlyB} testId="only-b" />
      </section>

      <section aria-labelledby="difference-heading" className="flex flex-col gap-2">
        <SectionHeading id="difference-heading">Maps for one wavefront</SectionHeading>
        <CompareMaps
          slug={slug}
          a={a.version}
          b={b.version}
          nollIndices={nollIndices}
          thetaNrad={Array.from(thetaGridNrad(a.setup.farField))}
          example={Object.fromEntries(Object.entries(VELORA_EXAMPLE_WAVEFRONT_NM).filter(([j]) => nollIndices.includes(Number(j))))}
          validation={validation}
        />
      </section>
      <StandingNotice />
    </div>
  );
}
