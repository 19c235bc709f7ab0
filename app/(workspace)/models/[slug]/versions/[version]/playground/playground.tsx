"use client";

import { useRouter } from "next/navigation";
import { useEffect, useMemo, useRef, useState, type ReactNode } from "react";
import { quietButtonClass, tdClass, thClass } from "@/components/empty-state";
import { formatNumber } from "@/components/format";
import { HeatmapFigure } from "@/components/plots/heatmap";
import { StandingNotice } from "@/components/standing-notice";
import { VersionPicker, type PickableModel } from "@/components/version-picker";
import { VELORA_EXAMPLE_WAVEFRONT_NM } from "@/lib/demo/velora";
import { nollToOrders } from "@/lib/optics/zernike";
import type { ValidityRange } from "@/lib/surrogate/validity";

/** How long the sliders must rest before a request goes out, ms (a drag sends a request every few frames). */
const DEBOUNCE_MS = 25;
/** Side of each map in px: both maps and the colour bar fit one row beside the wavefront panel. */
const MAP_SIZE = 240;
const MAP_UNIT = "pm/nrad";

interface EvaluateAnswer {
  state: string;
  coefficientsSha256: string;
  thetaNrad: number[];
  results: {
    ttlXPmPerNrad: number[][];
    ttlYPmPerNrad: number[][];
    peakAbsTtlPmPerNrad: number;
    peakAt: { thetaXNrad: number; thetaYNrad: number; axis: "x" | "y" };
    validity: { inRange: boolean; warnings: string[] };
  }[];
  notice: string;
}

interface ExactAnswer {
  exact: { peakAbsTtlPmPerNrad: number };
  surrogate: { peakAbsTtlPmPerNrad: number };
  differencePmPerNrad: { x: (number | null)[][]; y: (number | null)[][] };
  maxAbsDifferencePmPerNrad: number;
  maxAbsDifferenceAt: { thetaXNrad: number; thetaYNrad: number; axis: "x" | "y" } | null;
  notice: string;
}

interface Problem {
  title?: string;
  detail?: string;
  issues?: { path: string; message: string }[];
}

const problemText = (p: Problem, status: number) =>
  [p.detail ?? p.title ?? `The server answered ${status}.`, ...(p.issues ?? []).map((i) => `${i.path}: ${i.message}`)].join(" ");

/** A starting wavefront that shows something on the maps. */
const EXAMPLE_NM = VELORA_EXAMPLE_WAVEFRONT_NM;

const TERM_NAMES: Record<number, string> = {
  4: "defocus", 5: "astigmatism", 6: "astigmatism", 7: "coma", 8: "coma", 9: "trefoil", 10: "trefoil", 11: "spherical",
};

function totalRms(values: readonly number[]): number {
  return Math.sqrt(values.reduce((sum, v) => sum + v * v, 0));
}

function flat(grid: (number | null)[][]): (number | null)[] {
  return grid.flat();
}

export function Playground({
  slug,
  version,
  nollIndices,
  validity,
  thetaNrad,
  order,
  termCount,
  models,
}: {
  slug: string;
  version: number;
  ordering: "noll" | "ansi";
  indices: number[];
  nollIndices: number[];
  validity: ValidityRange;
  thetaNrad: number[];
  order: 1 | 2;
  termCount: number;
  models: PickableModel[];
}) {
  const router = useRouter();
  const [coefficients, setCoefficients] = useState<number[]>(() => nollIndices.map((j) => EXAMPLE_NM[j] ?? 0));
  const [answer, setAnswer] = useState<{ result: EvaluateAnswer["results"][number]; sha: string; roundTripMs: number; forKey: string } | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const [exact, setExact] = useState<{ answer: ExactAnswer; forKey: string; roundTripMs: number } | null>(null);
  const [exactBusy, setExactBusy] = useState(false);
  const [exactError, setExactError] = useState<string | null>(null);
  const inFlight = useRef<AbortController | null>(null);

  const rms = totalRms(coefficients);
  const sliderLimitNm = Math.ceil(Math.max(validity.maxTotalRmsNm, ...validity.termBoundsNm.map((b) => Math.max(-b.minNm, b.maxNm))));
  const wavefront = useMemo(
    () => ({
      ordering: "noll" as const,
      coefficientsNm: Object.fromEntries(nollIndices.map((j, k) => [String(j), coefficients[k]]).filter(([, v]) => v !== 0)),
    }),
    [coefficients, nollIndices],
  );
  const key = JSON.stringify(wavefront.coefficientsNm);
  const base = `/api/v1/models/${encodeURIComponent(slug)}/versions/${version}`;

  useEffect(() => {
    const timer = setTimeout(async () => {
      inFlight.current?.abort();
      const controller = new AbortController();
      inFlight.current = controller;
      setBusy(true);
      const started = performance.now();
      try {
        const response = await fetch(`${base}/evaluate`, {
          method: "POST",
          headers: { "content-type": "application/json" },
          body: JSON.stringify({ wavefronts: [wavefront], output: "map" }),
          signal: controller.signal,
        });
        const body = await response.json();
        if (!response.ok) {
          setError(problemText(body as Problem, response.status));
          return;
        }
        const evaluated = body as EvaluateAnswer;
        setAnswer({ result: evaluated.results[0], sha: evaluated.coefficientsSha256, roundTripMs: performance.now() - started, forKey: key });
        setError(null);
      } catch (caught) {
        if ((caught as Error).name !== "AbortError") setError(`The evaluation did not reach the server: ${(caught as Error).message}`);
      } finally {
        if (inFlight.current === controller) setBusy(false);
      }
    }, DEBOUNCE_MS);
    return () => clearTimeout(timer);
  }, [base, key, wavefront]);

  async function runExact() {
    setExactBusy(true);
    setExactError(null);
    const started = performance.now();
    try {
      const response = await fetch(`${base}/exact`, {
        method: "POST",
        headers: { "content-type": "application/json" },
        body: JSON.stringify({ wavefront }),
      });
      const body = await response.json();
      if (!response.ok) setExactError(problemText(body as Problem, response.status));
      else setExact({ answer: body as ExactAnswer, forKey: key, roundTripMs: performance.now() - started });
    } catch (caught) {
      setExactError(`The exact propagation did not reach the server: ${(caught as Error).message}`);
    } finally {
      setExactBusy(false);
    }
  }

  function setTerm(k: number, value: number) {
    if (!Number.isFinite(value)) return;
    setCoefficients((current) => current.map((v, i) => (i === k ? value : v)));
  }

  const result = answer?.result;
  const mapX = result ? flat(result.ttlXPmPerNrad) : null;
  const mapY = result ? flat(result.ttlYPmPerNrad) : null;
  const m = thetaNrad.length;
  const nodeOf = (thetaX: number, thetaY: number) => ({ ix: thetaNrad.indexOf(thetaX), iy: thetaNrad.indexOf(thetaY) });
  const peakNode = result ? nodeOf(result.peakAt.thetaXNrad, result.peakAt.thetaYNrad) : null;

  const differenceX = exact ? flat(exact.answer.differencePmPerNrad.x) : null;
  const differenceY = exact ? flat(exact.answer.differencePmPerNrad.y) : null;
  const wavefrontComment = `wavefront (Noll: nm RMS) ${JSON.stringify(wavefront.coefficientsNm)}; ${slug} v${version}`;
  const exactStale = exact !== null && exact.forKey !== key;
  const worstDifference = exact?.answer.maxAbsDifferenceAt ? nodeOf(exact.answer.maxAbsDifferenceAt.thetaXNrad, exact.answer.maxAbsDifferenceAt.thetaYNrad) : null;

  return (
    <div className="grid gap-6 xl:grid-cols-[1fr_20rem]">
      <div className="flex min-w-0 flex-col gap-4">
        <div className="flex flex-wrap items-center justify-between gap-3">
          <VersionPicker models={models} slug={slug} version={version} onChange={(s, v) => router.push(`/models/${s}/versions/${v}/playground`)} />
          <p className="text-xs text-muted" aria-live="polite" data-testid="round-trip">
            {busy ? "evaluating…" : answer ? `evaluated in ${Math.round(answer.roundTripMs)} ms (round trip)` : "evaluating…"}
          </p>
        </div>

        {error && (
          <p role="alert" className="rounded border border-fault bg-fault-soft px-3 py-2 text-sm text-fault" data-testid="evaluate-error">
            {error}
          </p>
        )}

        <section aria-labelledby="maps-heading" className="flex flex-col gap-2">
          <h2 id="maps-heading" className="text-md font-semibold">
            Surrogate TTL maps
          </h2>
          <div className="flex flex-wrap items-start gap-4" data-testid="ttl-maps" data-evaluated={answer?.forKey ?? ""}>
            {mapX && mapY && result ? (
              <HeatmapFigure
                title={`${slug} v${version} · both axes for this wavefront`}
                kind="signed"
                quantity="surrogate c"
                thetaNrad={thetaNrad}
                unit={MAP_UNIT}
                size={MAP_SIZE}
                comments={[wavefrontComment]}
                readoutTestId="hover-readout"
                maps={[
                  { label: "c_x", title: "c_x (TTL for tilt about x)", column: "ttl_x_pm_per_nrad", values: mapX, marker: result.peakAt.axis === "x" ? peakNode : null, testId: "map-x" },
                  { label: "c_y", title: "c_y (TTL for tilt about y)", column: "ttl_y_pm_per_nrad", values: mapY, marker: result.peakAt.axis === "y" ? peakNode : null, testId: "map-y" },
                ]}
              />
            ) : (
              <p className="text-sm text-muted">{error ? "No maps: the evaluation was refused." : "Evaluating the first map…"}</p>
            )}
          </div>
          {result && (
            <div className="flex flex-wrap gap-x-6 gap-y-1 text-sm">
              <p data-testid="peak">
                Peak <span className="font-mono font-medium">{formatNumber(result.peakAbsTtlPmPerNrad, 4)}</span> pm/nrad on c_{result.peakAt.axis} at θ = (
                <span className="font-mono">{formatNumber(result.peakAt.thetaXNrad, 3)}</span>,{" "}
                <span className="font-mono">{formatNumber(result.peakAt.thetaYNrad, 3)}</span>) nrad (circled)
              </p>
            </div>
          )}
        </section>

        <section aria-labelledby="exact-heading" className="flex flex-col gap-2">
          <div className="flex flex-wrap items-center gap-3">
            <h2 id="exact-heading" className="text-md font-semibold">
              Against the exact calculation
            </h2>
            <button type="button" onClick={runExact} disabled={exactBusy} className={quietButtonClass} data-testid="run-exact">
              {exactBusy ? "Propagating…" : "Exact"}
            </button>
            <span className="text-xs text-muted">
              propagates this wavefront exactly on the server&apos;s worker pool and maps surrogate − exact
            </span>
          </div>
          {exactError && (
            <p role="alert" className="rounded border border-fault bg-fault-soft px-3 py-2 text-sm text-fault">
              {exactError}
            </p>
          )}
          {exact && differenceX && differenceY && (
            <div className={`flex flex-col gap-2 ${exactStale ? "opacity-60" : ""}`} data-testid="difference-maps">
              {exactStale && <p className="text-xs text-caution">The coefficients have changed since: run Exact again for this wavefront.</p>}
              <HeatmapFigure
                title="Surrogate − exact"
                kind="signed"
                quantity="surrogate − exact"
                thetaNrad={thetaNrad}
                unit={MAP_UNIT}
                size={MAP_SIZE}
                comments={[wavefrontComment, "blank where the far field has a null (TTL undefined)"]}
                maps={[
                  { label: "c_x", title: "c_x: surrogate − exact", column: "difference_x_pm_per_nrad", values: differenceX, marker: exact.answer.maxAbsDifferenceAt?.axis === "x" ? worstDifference : null },
                  { label: "c_y", title: "c_y: surrogate − exact", column: "difference_y_pm_per_nrad", values: differenceY, marker: exact.answer.maxAbsDifferenceAt?.axis === "y" ? worstDifference : null },
                ]}
              />
              <p className="text-sm" data-testid="exact-summary">
                Largest |surrogate − exact|{" "}
                <span className="font-mono font-medium">{formatNumber(exact.answer.maxAbsDifferencePmPerNrad, 3)}</span> pm/nrad
                {exact.answer.maxAbsDifferenceAt && (
                  <>
                    {" "}
                    on c_{exact.answer.maxAbsDifferenceAt.axis} at θ = ({formatNumber(exact.answer.maxAbsDifferenceAt.thetaXNrad, 3)},{" "}
                    {formatNumber(exact.answer.maxAbsDifferenceAt.thetaYNrad, 3)}) nrad
                  </>
                )}
                ; exact peak {formatNumber(exact.answer.exact.peakAbsTtlPmPerNrad, 4)} pm/nrad, surrogate peak{" "}
                {formatNumber(exact.answer.surrogate.peakAbsTtlPmPerNrad, 4)} pm/nrad ({Math.round(exact.roundTripMs)} ms).
              </p>
            </div>
          )}
        </section>

        {result && (
          <details className="text-sm">
            <summary className="cursor-pointer text-muted">Numbers</summary>
            <table className="mt-2 border-collapse bg-surface font-mono text-xs" data-testid="numbers-table">
              <caption className="sr-only">The evaluation in numbers</caption>
              <tbody>
                {(
                  [
                    ["Version", `${slug} v${version}, order ${order}, ${termCount} terms`],
                    ["Coefficients SHA-256", answer!.sha],
                    ["Total WFE", `${formatNumber(rms, 4)} nm RMS`],
                    ["Peak |c|", `${formatNumber(result.peakAbsTtlPmPerNrad, 4)} pm/nrad (c_${result.peakAt.axis})`],
                    ["c_x range", `${formatNumber(Math.min(...(mapX as number[])), 4)} to ${formatNumber(Math.max(...(mapX as number[])), 4)} pm/nrad`],
                    ["c_y range", `${formatNumber(Math.min(...(mapY as number[])), 4)} to ${formatNumber(Math.max(...(mapY as number[])), 4)} pm/nrad`],
                    ["c at boresight", `c_x ${formatNumber((mapX as number[])[((m - 1) / 2) * m + (m - 1) / 2], 4)}, c_y ${formatNumber((mapY as number[])[((m - 1) / 2) * m + (m - 1) / 2], 4)} pm/nrad`],
                  ] as [string, string][]
                ).map(([label, value]) => (
                  <tr key={label} className="border-b border-line last:border-0">
                    <th scope="row" className={`${thClass} text-left font-sans font-normal text-muted`}>
                      {label}
                    </th>
                    <td className={`${tdClass} break-all`}>{value}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </details>
        )}
        <StandingNotice />
      </div>

      <CoefficientPanel
        nollIndices={nollIndices}
        coefficients={coefficients}
        limitNm={sliderLimitNm}
        validity={validity}
        rmsNm={rms}
        onChange={setTerm}
        onSet={setCoefficients}
      >
        {result && <ValidityBlock validity={result.validity} rmsNm={rms} limitNm={validity.maxTotalRmsNm} />}
      </CoefficientPanel>
    </div>
  );
}

function ValidityBlock({ validity, rmsNm, limitNm }: { validity: { inRange: boolean; warnings: string[] }; rmsNm: number; limitNm: number }) {
  return (
    <div
      className={`rounded border px-3 py-2 text-xs ${validity.inRange ? "border-good" : "border-caution"}`}
      data-testid="validity"
      data-in-range={validity.inRange}
    >
      <p className={`mb-1 text-sm font-medium ${validity.inRange ? "text-good" : "text-caution"}`}>
        {validity.inRange ? "Inside the validity range" : "Outside the validity range"}
      </p>
      <p className="text-muted">
        Total <span className="font-mono text-ink">{formatNumber(rmsNm, 3)}</span> of {formatNumber(limitNm, 3)} nm RMS.
      </p>
      {validity.warnings.length > 0 ? (
        <ul className="mt-1 list-disc pl-4">
          {validity.warnings.map((w) => (
            <li key={w}>{w}</li>
          ))}
        </ul>
      ) : (
        <p className="mt-1 text-muted">Every coefficient lies within the range the generating set covered.</p>
      )}
      {!validity.inRange && <p className="mt-1 text-muted">The maps are evaluated all the same; trust them less.</p>}
    </div>
  );
}

function CoefficientPanel({
  nollIndices,
  coefficients,
  limitNm,
  validity,
  rmsNm,
  onChange,
  onSet,
  children,
}: {
  children?: ReactNode;
  nollIndices: number[];
  coefficients: number[];
  limitNm: number;
  validity: ValidityRange;
  rmsNm: number;
  onChange: (k: number, value: number) => void;
  onSet: (values: number[]) => void;
}) {
  const over = rmsNm > validity.maxTotalRmsNm;
  return (
    <section aria-labelledby="coefficients-heading" className="flex flex-col gap-2 xl:sticky xl:top-4 xl:self-start">
      <div className="flex items-end justify-between border-b border-line pb-1">
        <h2 id="coefficients-heading" className="text-md font-semibold">
          Wavefront (nm RMS)
        </h2>
        <span className="flex gap-1">
          <button type="button" className="rounded border border-line px-2 py-0.5 text-xs hover:bg-sunken" onClick={() => onSet(nollIndices.map((j) => EXAMPLE_NM[j] ?? 0))}>
            Example
          </button>
          <button type="button" className="rounded border border-line px-2 py-0.5 text-xs hover:bg-sunken" onClick={() => onSet(nollIndices.map(() => 0))}>
            Zero
          </button>
        </span>
      </div>
      <p className="text-sm" data-testid="total-rms">
        Total <span className={`font-mono font-medium ${over ? "text-caution" : ""}`}>{formatNumber(rmsNm, 4)}</span> nm RMS
        <span className="text-muted"> (validity limit {formatNumber(validity.maxTotalRmsNm, 3)})</span>
      </p>
      {children}
      <ol className="flex max-h-[62vh] flex-col gap-1 overflow-y-auto pr-1">
        {nollIndices.map((j, k) => {
          const bound = validity.termBoundsNm.find((b) => b.noll === j);
          const outside = bound !== undefined && (coefficients[k] < bound.minNm || coefficients[k] > bound.maxNm);
          const { n, m } = nollToOrders(j);
          return (
            <li key={j} className="grid grid-cols-[6.5rem_1fr_4rem] items-center gap-2">
              <label htmlFor={`z-${j}`} className="truncate text-xs" title={`Noll ${j}: radial order ${n}, azimuthal ${m}${TERM_NAMES[j] ? `, ${TERM_NAMES[j]}` : ""}`}>
                <span className="font-mono font-medium">Z{j}</span> <span className="text-muted">{TERM_NAMES[j] ?? `n${n} m${m}`}</span>
              </label>
              <input
                id={`z-${j}`}
                type="range"
                min={-limitNm}
                max={limitNm}
                step={0.1}
                value={coefficients[k]}
                onChange={(event) => onChange(k, Number(event.target.value))}
                className="w-full accent-[rgb(var(--sp-accent))]"
                aria-label={`Z${j} (nm RMS)`}
                data-noll={j}
              />
              <input
                type="number"
                step={0.1}
                value={coefficients[k]}
                onChange={(event) => onChange(k, event.target.value === "" ? 0 : Number(event.target.value))}
                className={`w-full rounded border bg-surface px-1 py-0.5 text-right font-mono text-xs ${outside ? "border-caution" : "border-line"}`}
                aria-label={`Z${j} value (nm RMS)`}
                title={bound ? `fitted range ${formatNumber(bound.minNm, 3)} to ${formatNumber(bound.maxNm, 3)} nm` : undefined}
              />
            </li>
          );
        })}
      </ol>
    </section>
  );
}
