import type { Metadata } from "next";
import Link from "next/link";
import { buttonLinkClass, EmptyState, linkClass, SectionHeading, tdClass, thClass } from "@/components/empty-state";
import { formatDuration, formatIndexList, formatNumber, formatTime } from "@/components/format";
import { PageHeading } from "@/components/page-heading";
import { orNotFound, requirePageActor } from "@/components/server/page";
import { StateBadge } from "@/components/state-badge";
import { StandingNotice } from "@/components/standing-notice";
import { can } from "@/lib/access/actor";
import { getModel } from "@/lib/db/models";
import { listRuns } from "@/lib/db/runs";
import { listVersions } from "@/lib/db/versions";

type Params = Promise<{ slug: string }>;

export async function generateMetadata({ params }: { params: Params }): Promise<Metadata> {
  return { title: (await params).slug };
}

const RECENT_RUNS = 10;

export default async function ModelPage({ params }: { params: Params }) {
  const { slug } = await params;
  const { actor } = await requirePageActor();
  const model = await orNotFound(getModel(actor, slug));
  const [versions, runs] = await Promise.all([listVersions(actor, slug), listRuns(actor, { model: slug }, { limit: 500, cursor: null })]);
  const recentRuns = runs.items.slice(-RECENT_RUNS).reverse();
  const mayTrain = can(actor, "train", slug);
  const { setup } = model.setup;

  return (
    <div className="flex flex-col gap-6">
      <div>
        <p className="text-xs text-muted">
          <Link href="/" className={linkClass}>
            Catalogue
          </Link>{" "}
          / <span className="font-mono">{model.slug}</span>
        </p>
        <PageHeading title={model.name}>
          {mayTrain && (
            <Link href={`/models/${slug}/versions/new`} className={buttonLinkClass}>
              Train a new version
            </Link>
          )}
        </PageHeading>
        <dl className="grid grid-cols-[8rem_1fr] gap-x-4 gap-y-1 text-sm md:grid-cols-[8rem_1fr_8rem_1fr]">
          <dt className="text-muted">Setup</dt>
          <dd>
            {model.setup.name}{" "}
            <span className="font-mono text-xs text-muted">
              λ {setup.wavelengthNm} nm, D {setup.apertureDiameterM} m, w {setup.beamRadiusM} m, L {formatNumber(setup.distanceM, 3)} m
            </span>
          </dd>
          <dt className="text-muted">Far field</dt>
          <dd className="font-mono text-xs">
            ±{setup.farField.halfAngleNrad} nrad, {setup.farField.pointsPerAxis}² nodes; pupil {setup.pupilSamples}²
          </dd>
          <dt className="text-muted">Zernike set</dt>
          <dd className="font-mono text-xs">
            {model.zernike.ordering === "noll" ? "Noll" : "ANSI"} {formatIndexList(model.zernike.indices)} ({model.zernike.indices.length} terms)
          </dd>
          <dt className="text-muted">Latest released</dt>
          <dd className="font-mono text-xs">{model.latestReleasedVersion === null ? "none" : `v${model.latestReleasedVersion}`}</dd>
          {model.description && (
            <>
              <dt className="text-muted">Description</dt>
              <dd className="md:col-span-3">{model.description}</dd>
            </>
          )}
        </dl>
      </div>

      <section aria-labelledby="versions-heading">
        <SectionHeading
          id="versions-heading"
          aside={
            <span className="text-xs text-muted">
              {versions.length} versions
              {versions.length > 1 && (
                <>
                  {" "}
                  ·{" "}
                  <Link href={`/models/${slug}/compare`} className={linkClass} data-testid="compare-link">
                    compare two versions
                  </Link>
                </>
              )}
            </span>
          }
        >
          Versions
        </SectionHeading>
        {versions.length === 0 ? (
          <EmptyState title="No versions yet." testId="versions-empty">
            {mayTrain ? (
              <>
                <Link href={`/models/${slug}/versions/new`} className={linkClass}>
                  Train the first version
                </Link>{" "}
                with the built-in propagator or from an uploaded generating set.
              </>
            ) : (
              "A modeller trains the first version; it appears here as a draft."
            )}
          </EmptyState>
        ) : (
          <div className="overflow-x-auto">
            <table className="w-full border-collapse bg-surface text-sm" data-testid="versions-table">
              <caption className="sr-only">Versions of {model.name}, oldest first</caption>
              <thead>
                <tr className="border-b border-line text-left text-xs text-muted">
                  <th scope="col" className={thClass}>Version</th>
                  <th scope="col" className={thClass}>State</th>
                  <th scope="col" className={`${thClass} text-right`}>Order</th>
                  <th scope="col" className={`${thClass} text-right`}>Terms</th>
                  <th scope="col" className={thClass}>Generating set</th>
                  <th scope="col" className={`${thClass} text-right`}>Valid to (nm RMS)</th>
                  <th scope="col" className={`${thClass} text-right`}>Worst validation error (pm/nrad)</th>
                  <th scope="col" className={`${thClass} text-right`}>of peak TTL</th>
                  <th scope="col" className={thClass}>Created (UTC)</th>
                </tr>
              </thead>
              <tbody>
                {versions.map((v) => {
                  const p = v.provenance;
                  const overall = v.statistics?.overall;
                  return (
                    <tr key={v.version} className="border-b border-line last:border-0" data-version={v.version}>
                      <td className={tdClass}>
                        <Link href={`/models/${slug}/versions/${v.version}`} className={`font-mono ${linkClass}`}>
                          v{v.version}
                        </Link>
                        {v.parentVersion !== null && <span className="ml-1 text-xs text-muted">from v{v.parentVersion}</span>}
                      </td>
                      <td className={tdClass}>
                        <StateBadge state={v.state} />
                      </td>
                      <td className={`${tdClass} text-right font-mono`}>{v.order}</td>
                      <td className={`${tdClass} text-right font-mono`}>{v.termCount}</td>
                      <td className={`${tdClass} font-mono text-xs`}>
                        {p.design} {p.size}
                        {p.maxRmsNm !== null && ` ≤ ${formatNumber(p.maxRmsNm)} nm`}
                        {p.stepNm !== null && `, step ${formatNumber(p.stepNm)} nm`}
                      </td>
                      <td className={`${tdClass} text-right font-mono`}>{formatNumber(v.validity.maxTotalRmsNm)}</td>
                      <td className={`${tdClass} text-right font-mono`}>
                        {overall ? formatNumber(overall.maxAbsErrorPmPerNrad, 3) : <span className="text-muted">no validation set</span>}
                      </td>
                      <td className={`${tdClass} text-right font-mono`}>
                        {overall ? `${formatNumber(overall.maxErrorRelativeToPeak * 100, 3)} %` : "–"}
                      </td>
                      <td className={`${tdClass} font-mono text-xs`}>
                        {formatTime(v.createdAt)} <span className="text-muted">{v.createdBy ?? ""}</span>
                      </td>
                    </tr>
                  );
                })}
              </tbody>
            </table>
          </div>
        )}
        <div className="mt-2">
          <StandingNotice />
        </div>
      </section>

      <section aria-labelledby="runs-heading">
        <SectionHeading id="runs-heading" aside={<span className="text-xs text-muted">latest {RECENT_RUNS}, newest first</span>}>
          Runs
        </SectionHeading>
        {recentRuns.length === 0 ? (
          <p className="text-sm text-muted">No training or pruning runs for this model yet.</p>
        ) : (
          <table className="w-full border-collapse bg-surface text-sm" data-testid="runs-table">
            <caption className="sr-only">Recent runs of {model.name}</caption>
            <thead>
              <tr className="border-b border-line text-left text-xs text-muted">
                <th scope="col" className={thClass}>Run</th>
                <th scope="col" className={thClass}>Kind</th>
                <th scope="col" className={thClass}>State</th>
                <th scope="col" className={`${thClass} text-right`}>Samples</th>
                <th scope="col" className={`${thClass} text-right`}>Took</th>
                <th scope="col" className={thClass}>Result</th>
                <th scope="col" className={thClass}>Queued (UTC)</th>
              </tr>
            </thead>
            <tbody>
              {recentRuns.map((run) => (
                <tr key={run.id} className="border-b border-line last:border-0">
                  <td className={tdClass}>
                    <Link href={`/runs/${run.id}`} className={`font-mono ${linkClass}`}>
                      #{run.id}
                    </Link>
                  </td>
                  <td className={tdClass}>{run.kind}</td>
                  <td className={tdClass}>
                    <StateBadge state={run.state} />
                  </td>
                  <td className={`${tdClass} text-right font-mono`}>
                    {run.progress.done} / {run.progress.total}
                  </td>
                  <td className={`${tdClass} text-right font-mono`}>
                    {run.startedAt && run.finishedAt ? formatDuration((Date.parse(run.finishedAt) - Date.parse(run.startedAt)) / 1000) : "–"}
                  </td>
                  <td className={`${tdClass} text-xs`}>
                    {run.version !== null ? (
                      <Link href={`/models/${slug}/versions/${run.version}`} className={`font-mono ${linkClass}`}>
                        v{run.version}
                      </Link>
                    ) : run.error ? (
                      <span className="text-fault">{run.error.slice(0, 120)}</span>
                    ) : (
                      "–"
                    )}
                  </td>
                  <td className={`${tdClass} font-mono text-xs`}>{formatTime(run.createdAt)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
    </div>
  );
}
