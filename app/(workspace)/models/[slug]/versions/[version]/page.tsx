import type { Metadata } from "next";
import Link from "next/link";
import type { ReactNode } from "react";
import { linkClass, quietButtonClass, SectionHeading, tdClass, thClass } from "@/components/empty-state";
import { formatIndexList, formatNumber, formatTime } from "@/components/format";
import { ModelTrail } from "@/components/model-trail";
import { PageHeading } from "@/components/page-heading";
import { orNotFound, requirePageVersion } from "@/components/server/page";
import { StandingNotice } from "@/components/standing-notice";
import { StateBadge } from "@/components/state-badge";
import { can } from "@/lib/access/actor";
import { getModel } from "@/lib/db/models";
import { thetaGridNrad } from "@/lib/optics/setup";
import type { ErrorSummary } from "@/lib/surrogate/statistics";
import { ResidualPlots } from "./residual-plots";
import { ReviewSection } from "./review-section";
import { SubmitForReview } from "./submit-button";

type Params = Promise<{ slug: string; version: string }>;

export async function generateMetadata({ params }: { params: Params }): Promise<Metadata> {
  const { slug, version } = await params;
  return { title: `${slug} v${version}` };
}

function Facts({ rows }: { rows: [string, ReactNode][] }) {
  return (
    <dl className="grid grid-cols-[11rem_1fr] gap-x-4 gap-y-1 text-sm">
      {rows.map(([label, value]) => (
        <div key={label} className="contents">
          <dt className="text-muted">{label}</dt>
          <dd className="min-w-0 break-words font-mono text-xs leading-5">{value}</dd>
        </div>
      ))}
    </dl>
  );
}

function StatisticsRow({ label, summary }: { label: ReactNode; summary: ErrorSummary }) {
  return (
    <tr className="border-b border-line last:border-0">
      <th scope="row" className={`${tdClass} text-left font-normal`}>
        {label}
      </th>
      <td className={`${tdClass} text-right`}>{summary.samples}</td>
      <td className={`${tdClass} text-right`}>{formatNumber(summary.peakAbsTtlPmPerNrad, 3)}</td>
      <td className={`${tdClass} text-right`}>{formatNumber(summary.maxAbsErrorPmPerNrad, 3)}</td>
      <td className={`${tdClass} text-right`}>{formatNumber(summary.rmsErrorPmPerNrad, 3)}</td>
      <td className={`${tdClass} text-right`}>{formatNumber(summary.maxErrorRelativeToPeak * 100, 3)} %</td>
      <td className={`${tdClass} text-right`}>{formatNumber(summary.worstSampleRelativeError * 100, 3)} %</td>
    </tr>
  );
}

export default async function VersionPage({ params }: { params: Params }) {
  const { slug, version: raw } = await params;
  const { user, actor, version: v } = await requirePageVersion(slug, raw);
  const model = await orNotFound(getModel(actor, slug));
  const mayTrain = can(actor, "train", slug);
  const maySubmit = v.state === "draft" && mayTrain && v.createdBy === user.email;
  const p = v.provenance;
  const stats = v.statistics;
  const theta = Array.from(thetaGridNrad(v.setup.farField));
  const download = (format: "stpm" | "npz") => `/api/v1/models/${encodeURIComponent(slug)}/versions/${v.version}/coefficients?format=${format}`;
  const linear = v.terms.filter((t) => t.length === 1).length;
  const products = v.terms.filter((t) => t.length === 2).length;

  return (
    <div className="flex flex-col gap-6">
      <div>
        <ModelTrail slug={slug} />
        <PageHeading title={`${model.name} · version ${v.version}`}>
          <div className="flex items-start gap-3">
            <span data-testid="version-state">
              <StateBadge state={v.state} />
            </span>
            {maySubmit && <SubmitForReview slug={slug} version={v.version} />}
          </div>
        </PageHeading>
        {v.state === "draft" && !maySubmit && (
          <p className="text-sm text-muted">A draft: only the modeller who trained it ({v.createdBy ?? "unknown"}) can submit it for review.</p>
        )}
        {v.state === "in-review" && <p className="text-sm text-muted">Waiting for a reviewer, who approves it or returns it with a comment.</p>}
        {v.retirement && (
          <p className="rounded border border-caution px-3 py-2 text-sm text-caution" data-testid="retirement">
            Retired {formatTime(v.retirement.retiredAt)}: {v.retirement.reason}. Evaluation ends at the sunset,{" "}
            {formatTime(v.retirement.sunsetAt)} UTC
            {v.retirement.successorVersion !== null && (
              <>
                ; use{" "}
                <Link href={`/models/${slug}/versions/${v.retirement.successorVersion}`} className="underline">
                  version {v.retirement.successorVersion}
                </Link>{" "}
                instead
              </>
            )}
            .
          </p>
        )}
      </div>

      <ReviewSection version={v} actor={actor} />

      <div className="grid gap-6 lg:grid-cols-3">
        <section aria-labelledby="summary-heading">
          <SectionHeading id="summary-heading">Summary</SectionHeading>
          <Facts
            rows={[
              ["Order", v.order === 1 ? "1 (linear)" : "2 (quadratic)"],
              ["Terms", `${v.termCount}: constant, ${linear} linear, ${products} products`],
              ["Zernike set", `${v.zernike.ordering === "noll" ? "Noll" : "ANSI"} ${formatIndexList(v.zernike.indices)}`],
              ["Far field", `±${v.setup.farField.halfAngleNrad} nrad, ${v.setup.farField.pointsPerAxis}² nodes`],
              ["Setup", `${model.setup.name}`],
              ["Parent version", v.parentVersion === null ? "none" : `v${v.parentVersion}`],
              ["Created", `${formatTime(v.createdAt)} UTC by ${v.createdBy ?? "unknown"}`],
              ["Software", v.softwareVersion],
            ]}
          />
        </section>
        <section aria-labelledby="provenance-heading">
          <SectionHeading id="provenance-heading">Provenance and fit</SectionHeading>
          <Facts
            rows={[
              ["Generating set", `${p.design}, ${p.size} samples`],
              ...(p.maxRmsNm !== null ? ([["Up to", `${formatNumber(p.maxRmsNm)} nm RMS`]] as [string, ReactNode][]) : []),
              ...(p.stepNm !== null ? ([["Step", `${formatNumber(p.stepNm)} nm`]] as [string, ReactNode][]) : []),
              ...(p.seed !== null ? ([["Seed", String(p.seed)]] as [string, ReactNode][]) : []),
              ...(p.uploadedSha256 ? ([["Uploaded set SHA-256", p.uploadedSha256]] as [string, ReactNode][]) : []),
              [
                "Validation set",
                p.validationSet
                  ? `${p.validationSet.size} samples up to ${formatNumber(p.validationSet.maxRmsNm)} nm, seed ${p.validationSet.seed}`
                  : p.validationUploadedSha256
                    ? `uploaded, SHA-256 ${p.validationUploadedSha256}`
                    : "none",
              ],
              ["Fit samples", String(v.fit.samples)],
              ["Condition number", formatNumber(v.fit.conditionNumber, 3)],
              ["Training residual", `${formatNumber(v.fit.trainingResidualRmsPmPerNrad, 3)} pm/nrad RMS`],
              ...(v.pruning
                ? ([
                    ["Pruned from", `${v.pruning.parentTermCount} terms, budget ${v.pruning.budgetRmsNm} nm, jitter ${v.pruning.jitterNrad} nrad, threshold ${v.pruning.thresholdPm} pm`],
                    ["Dropped terms: bound", `≤ ${formatNumber(v.pruning.droppedTtlBoundPmPerNrad, 3)} pm/nrad (≤ ${formatNumber(v.pruning.droppedNoiseBoundPm, 3)} pm), per-node bound within the budget`],
                    [
                      "Dropped terms: seen",
                      v.pruning.droppedTtlSeenPmPerNrad === null
                        ? "not checked (no validation set)"
                        : `${formatNumber(v.pruning.droppedTtlSeenPmPerNrad, 3)} pm/nrad, largest change on the validation wavefronts scaled into the budget`,
                    ],
                  ] as [string, ReactNode][])
                : []),
            ]}
          />
        </section>
        <section aria-labelledby="downloads-heading">
          <SectionHeading id="downloads-heading">Coefficients</SectionHeading>
          <div className="flex flex-wrap gap-2">
            <a href={download("stpm")} download className={quietButtonClass} data-testid="download-stpm">
              Download .stpm
            </a>
            <a href={download("npz")} download className={quietButtonClass} data-testid="download-npz">
              Download .npz
            </a>
            <Link href={`/models/${slug}/versions/${v.version}/analysis`} className={quietButtonClass} data-testid="analysis-link">
              Analysis: worst case, requirements, modes, correction, noise, measured wavefront
            </Link>
          </div>
          <p className="mt-2 text-xs text-muted">
            <span className="font-mono">.stpm</span> is the registry&apos;s own model file (the CLI&apos;s{" "}
            <span className="font-mono">stillpoint eval</span> reads it); <span className="font-mono">.npz</span> opens with{" "}
            <span className="font-mono">numpy.load</span>. Both carry the notice below.
          </p>
          <p className="mt-2 flex flex-col gap-1 text-sm">
            <Link href={`/models/${slug}/versions/${v.version}/terms`} className={linkClass} data-testid="terms-link">
              Coefficient maps and term significance
            </Link>
            <Link href={`/models/${slug}/compare?a=${v.version}`} className={linkClass} data-testid="compare-link">
              Compare with another version
            </Link>
          </p>
          <p className="mt-2 text-xs">
            <span className="text-muted">SHA-256 of the coefficients</span>
            <br />
            <span className="break-all font-mono" data-testid="coefficients-sha256">
              {v.coefficientsSha256}
            </span>
          </p>
        </section>
      </div>

      <section aria-labelledby="residuals-heading">
        <SectionHeading id="residuals-heading" aside={<span className="text-xs text-muted">surrogate − exact, pm/nrad</span>}>
          Validation residuals
        </SectionHeading>
        {stats === null ? (
          <p className="text-sm text-muted" data-testid="no-statistics">
            This version was trained without a validation set, so there are no residuals to show. Train another version with a
            validation set to see them.
          </p>
        ) : (
          <div className="flex flex-col gap-4">
            <ResidualPlots thetaNrad={theta} statistics={stats} validityLimitNm={v.validity.maxTotalRmsNm} order={v.order} version={`${slug} v${v.version}`} />
            <div className="overflow-x-auto">
              <table className="w-full border-collapse bg-surface font-mono text-xs" data-testid="statistics-table">
                <caption className="mb-1 text-left font-sans text-xs text-muted">
                  Residual statistics over every node and both axes, overall and per band of total wavefront error
                </caption>
                <thead>
                  <tr className="border-b border-line text-right font-sans text-xs text-muted">
                    <th scope="col" className={`${thClass} text-left`}>Validation samples</th>
                    <th scope="col" className={thClass}>n</th>
                    <th scope="col" className={thClass}>peak |TTL| (pm/nrad)</th>
                    <th scope="col" className={thClass}>max |error| (pm/nrad)</th>
                    <th scope="col" className={thClass}>RMS error (pm/nrad)</th>
                    <th scope="col" className={thClass}>max error / peak</th>
                    <th scope="col" className={thClass}>worst sample, relative</th>
                  </tr>
                </thead>
                <tbody>
                  <StatisticsRow label={<span className="font-sans font-medium">all</span>} summary={stats.overall} />
                  {stats.perRmsBin.map((bin) => (
                    <StatisticsRow key={bin.loNm} label={`${formatNumber(bin.loNm, 3)} – ${formatNumber(bin.hiNm, 3)} nm RMS`} summary={bin} />
                  ))}
                </tbody>
              </table>
            </div>
          </div>
        )}
        <div className="mt-2">
          <StandingNotice />
        </div>
      </section>

      <div className="grid gap-6 lg:grid-cols-2">
        <section aria-labelledby="validity-heading">
          <SectionHeading id="validity-heading">Validity range</SectionHeading>
          <p className="mb-2 text-sm">
            Total wavefront error up to <span className="font-mono">{formatNumber(v.validity.maxTotalRmsNm)}</span> nm RMS, and each
            coefficient within the range the generating set covered:
          </p>
          <table className="w-full border-collapse bg-surface font-mono text-xs" data-testid="validity-table">
            <caption className="sr-only">Per-term bounds of the validity range, nm</caption>
            <thead>
              <tr className="border-b border-line text-right font-sans text-xs text-muted">
                <th scope="col" className={`${thClass} text-left`}>Noll</th>
                <th scope="col" className={thClass}>min (nm)</th>
                <th scope="col" className={thClass}>max (nm)</th>
                <th scope="col" className={`${thClass} text-left`}>Noll</th>
                <th scope="col" className={thClass}>min (nm)</th>
                <th scope="col" className={thClass}>max (nm)</th>
              </tr>
            </thead>
            <tbody>
              {Array.from({ length: Math.ceil(v.validity.termBoundsNm.length / 2) }, (_, row) => {
                const pair = v.validity.termBoundsNm.slice(row * 2, row * 2 + 2);
                return (
                  <tr key={row} className="border-b border-line text-right last:border-0">
                    {pair.map((b) => (
                      <BoundCells key={b.noll} noll={b.noll} minNm={b.minNm} maxNm={b.maxNm} />
                    ))}
                  </tr>
                );
              })}
            </tbody>
          </table>
        </section>
        <section aria-labelledby="history-heading">
          <SectionHeading id="history-heading">State history</SectionHeading>
          <table className="w-full border-collapse bg-surface text-sm" data-testid="history-table">
            <caption className="sr-only">State changes, oldest first</caption>
            <thead>
              <tr className="border-b border-line text-left text-xs text-muted">
                <th scope="col" className={thClass}>State</th>
                <th scope="col" className={thClass}>When (UTC)</th>
                <th scope="col" className={thClass}>By</th>
                <th scope="col" className={thClass}>Comment</th>
              </tr>
            </thead>
            <tbody>
              {v.history.map((event, i) => (
                <tr key={i} className="border-b border-line align-top last:border-0">
                  <td className={tdClass}>
                    <StateBadge state={event.state} />
                  </td>
                  <td className={`${tdClass} font-mono text-xs`}>{formatTime(event.at, true)}</td>
                  <td className={`${tdClass} text-xs`}>{event.by ?? "–"}</td>
                  <td className={`${tdClass} text-xs`}>{event.comment ?? ""}</td>
                </tr>
              ))}
            </tbody>
          </table>
          {v.runId !== null && (
            <p className="mt-2 text-xs text-muted">
              Trained by{" "}
              <Link href={`/runs/${v.runId}`} className={linkClass}>
                run #{v.runId}
              </Link>
              .
            </p>
          )}
        </section>
      </div>
    </div>
  );
}

function BoundCells({ noll, minNm, maxNm }: { noll: number; minNm: number; maxNm: number }) {
  return (
    <>
      <td className={`${tdClass} text-left`}>{noll}</td>
      <td className={tdClass}>{formatNumber(minNm, 3)}</td>
      <td className={tdClass}>{formatNumber(maxNm, 3)}</td>
    </>
  );
}
