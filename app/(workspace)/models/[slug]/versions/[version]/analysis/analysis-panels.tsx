"use client";

import { useEffect, useMemo, useState, type ReactNode } from "react";
import { quietButtonClass, SectionHeading, tdClass, thClass } from "@/components/empty-state";
import { formatDuration, formatNumber } from "@/components/format";
import { parseIndexList } from "@/components/forms/index-list";
import { RankedBarChart } from "@/components/plots/bar-chart";
import { downloadText } from "@/components/plots/export";
import { HeatmapFigure } from "@/components/plots/heatmap";
import { LineChart } from "@/components/plots/line-chart";
import { PupilMapFigure } from "@/components/plots/pupil-map";
import { wavefrontPupilMap } from "@/lib/optics/pupilMap";

type Json = Record<string, any>; // eslint-disable-line @typescript-eslint/no-explicit-any
type Grid = number[][];
interface Wavefront {
  ordering: "noll" | "ansi";
  coefficientsNm: Record<string, number>;
}

const inputClass = "w-28 rounded border border-line bg-surface px-2 py-1 font-mono text-sm";
const labelClass = "flex flex-col gap-0.5 text-xs text-muted";

function problemText(body: Json, status: number): string {
  return [body.detail ?? body.title ?? `The server answered ${status}.`, ...((body.issues ?? []) as { path: string; message: string }[]).map((i) => `${i.path}: ${i.message}`)].join(" ");
}

/** One call of an analysis route with the session cookie: the answer, or the problem's words. */
function useCall<T = Json>() {
  const [data, setData] = useState<T | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  async function call(url: string, init: RequestInit): Promise<T | null> {
    setBusy(true);
    setError(null);
    try {
      const response = await fetch(url, init);
      const body = (await response.json()) as Json;
      if (!response.ok) {
        setError(problemText(body, response.status));
        return null;
      }
      setData(body as T);
      return body as T;
    } catch (caught) {
      setError(`The request failed: ${(caught as Error).message}`);
      return null;
    } finally {
      setBusy(false);
    }
  }
  const post = (url: string, body: unknown) => call(url, { method: "POST", headers: { "content-type": "application/json" }, body: JSON.stringify(body) });
  return { data, error, busy, post, call, setData };
}

function Failure({ error }: { error: string | null }) {
  return error ? (
    <p role="alert" className="text-sm text-fault">
      {error}
    </p>
  ) : null;
}

function Panel({ id, title, children }: { id: string; title: string; children: ReactNode }) {
  return (
    <section aria-labelledby={id} className="flex flex-col gap-2 rounded border border-line p-3" data-testid={id}>
      <SectionHeading id={id}>{title}</SectionHeading>
      {children}
    </section>
  );
}

function NumberField({ label, value, onChange, testId }: { label: string; value: string; onChange: (v: string) => void; testId?: string }) {
  return (
    <label className={labelClass}>
      {label}
      <input className={inputClass} value={value} inputMode="decimal" onChange={(e) => onChange(e.target.value)} data-testid={testId} />
    </label>
  );
}

const flat = (grid: Grid) => grid.flat();
const nodeIndex = (theta: number[], x: number, y: number) => ({ ix: theta.indexOf(x), iy: theta.indexOf(y) });

/** Signed coefficients as ranked bars of |a_j| (positive and negative told apart). */
function CoefficientBars({ title, coefficients, unit = "nm", testId }: { title: string; coefficients: Record<string, number>; unit?: string; testId?: string }) {
  const items = Object.entries(coefficients)
    .filter(([, v]) => v !== 0)
    .sort((a, b) => Math.abs(b[1]) - Math.abs(a[1]))
    .map(([k, v]) => ({ label: `Z${k}`, value: Math.abs(v), group: v >= 0 ? "plus" : "minus" }));
  return (
    <RankedBarChart
      title={title}
      items={items}
      groups={[
        { key: "plus", label: "positive", colour: "rgb(var(--sp-accent))" },
        { key: "minus", label: "negative", colour: "rgb(var(--sp-caution))", marked: true },
      ]}
      valueLabel="|coefficient|"
      unit={unit}
      rankLabel="term"
      log={false}
      testId={testId}
      note={
        items.length > 0 && (
          <p className="text-xs text-muted">
            Largest: {Object.entries(coefficients)
              .filter(([, v]) => v !== 0)
              .sort((a, b) => Math.abs(b[1]) - Math.abs(a[1]))
              .slice(0, 6)
              .map(([k, v]) => `Z${k} ${v >= 0 ? "+" : "−"}${formatNumber(Math.abs(v), 3)}`)
              .join(", ")}
            {items.length > 6 ? ", …" : ""} {unit}
          </p>
        )
      }
    />
  );
}

/** A colour range spanning the values of some maps (non-finite skipped), so that small variations stay visible. */
function spanOf(...maps: (readonly (number | null)[])[]): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (const map of maps) for (const v of map) if (v !== null && Number.isFinite(v)) [lo, hi] = [Math.min(lo, v), Math.max(hi, v)];
  return lo < hi ? [lo, hi] : [Math.min(0, lo), Math.max(lo, 0) + 1];
}

/** Cells per side of the pupil pictures of model wavefronts (a maximiser, a mode). */
const PICTURE_SAMPLES = 64;

/** The pupil picture of a wavefront's coefficients in an ordering, or null while there are none. */
function usePupilPicture(ordering: Wavefront["ordering"] | undefined, coefficientsNm: Record<string, number> | undefined): Float64Array | null {
  return useMemo(() => (ordering && coefficientsNm ? wavefrontPupilMap({ ordering, coefficientsNm }, PICTURE_SAMPLES) : null), [ordering, coefficientsNm]);
}

function downloadJson(value: unknown, name: string) {
  downloadText(JSON.stringify(value, null, 2), name, "application/json");
}

export function AnalysisPanels({
  slug,
  version,
  ordering,
  indices,
  maxTotalRmsNm,
  apertureDiameterM,
  defaults,
}: {
  slug: string;
  version: number;
  ordering: "noll" | "ansi";
  indices: number[];
  maxTotalRmsNm: number;
  apertureDiameterM: number;
  defaults: { budgetRmsNm: number; jitterNrad: number };
}) {
  const base = `/api/v1/models/${slug}/versions/${version}`;
  const [wavefrontText, setWavefrontText] = useState(JSON.stringify({ ordering, coefficientsNm: { [String(indices[0])]: 8, [String(indices[Math.min(7, indices.length - 1)])]: -4 } }));
  let wavefront: Wavefront | null = null;
  let wavefrontError: string | null = null;
  try {
    wavefront = JSON.parse(wavefrontText) as Wavefront;
  } catch {
    wavefrontError = "The wavefront is not JSON: write it as {\"ordering\": \"noll\", \"coefficientsNm\": {\"4\": 8}}.";
  }
  const shared = { base, slug, version, ordering, indices, wavefront, setWavefrontText };
  return (
    <div className="flex flex-col gap-4">
      <section aria-labelledby="wavefront-heading" className="flex flex-col gap-1">
        <SectionHeading id="wavefront-heading">Wavefront used by the modes, correction and noise panels</SectionHeading>
        <textarea
          className="h-16 w-full rounded border border-line bg-surface p-2 font-mono text-xs"
          value={wavefrontText}
          onChange={(e) => setWavefrontText(e.target.value)}
          aria-label="Wavefront JSON"
          data-testid="analysis-wavefront"
        />
        {wavefrontError && <p className="text-xs text-fault">{wavefrontError}</p>}
        <p className="text-xs text-muted">
          {ordering === "noll" ? "Noll" : "ANSI"} indices {indices[0]}–{indices[indices.length - 1]}, nm RMS. The version was fitted and validated up to {formatNumber(maxTotalRmsNm, 3)} nm total RMS.
        </p>
      </section>
      <WorstCasePanel {...shared} defaults={defaults} />
      <RequirementsPanel {...shared} defaults={defaults} />
      <ModesPanel {...shared} />
      <CorrectionPanel {...shared} />
      <NoisePanel {...shared} />
      <FitPanel {...shared} apertureDiameterM={apertureDiameterM} />
    </div>
  );
}

interface Shared {
  base: string;
  slug: string;
  version: number;
  ordering: "noll" | "ansi";
  indices: number[];
  wavefront: Wavefront | null;
  setWavefrontText: (text: string) => void;
}

function WorstCasePanel({ base, slug, version, defaults }: Shared & { defaults: { budgetRmsNm: number; jitterNrad: number } }) {
  const [budget, setBudget] = useState(String(defaults.budgetRmsNm));
  const [jitter, setJitter] = useState(String(defaults.jitterNrad));
  const run = useCall();
  const exact = useCall();
  const w = run.data;
  const worstPicture = usePupilPicture(w?.worst.wavefront.ordering, w?.worst.wavefront.coefficientsNm);
  const marker = w ? nodeIndex(w.thetaNrad, w.worst.thetaXNrad, w.worst.thetaYNrad) : null;
  const exactAtWorst =
    exact.data && w && marker ? (exact.data.exact[w.worst.axis === "x" ? "ttlXPmPerNrad" : "ttlYPmPerNrad"][marker.iy][marker.ix] as number | null) : null;
  return (
    <Panel id="worst-case-heading" title="Worst case for a WFE budget">
      <div className="flex flex-wrap items-end gap-3">
        <NumberField label="WFE budget (nm RMS)" value={budget} onChange={setBudget} testId="worst-budget" />
        <NumberField label="Jitter (nrad RMS per axis)" value={jitter} onChange={setJitter} />
        <button type="button" className={quietButtonClass} disabled={run.busy} onClick={() => run.post(`${base}/worst-case`, { budgetRmsNm: Number(budget), jitterNrad: Number(jitter) })} data-testid="worst-run">
          {run.busy ? "Computing…" : "Compute"}
        </button>
      </div>
      <Failure error={run.error} />
      {w && marker && (
        <>
          <p className="text-sm" data-testid="worst-summary">
            Worst |TTL| {formatNumber(w.worst.valuePmPerNrad, 4)} pm/nrad at θ = ({formatNumber(w.worst.thetaXNrad, 3)}, {formatNumber(w.worst.thetaYNrad, 3)}) nrad on c<sub>{w.worst.axis}</sub>
            {w.worst.lengthNoisePm !== null && <>; length noise {formatNumber(w.worst.lengthNoisePm, 4)} pm</>}; simple bound there {formatNumber(w.worst.boundPmPerNrad, 4)} pm/nrad, largest bound {formatNumber(w.peakBoundPmPerNrad, 4)} pm/nrad. Solved as {w.worst.solution} ({w.hardCases} hard cases) in {w.computeMs} ms. Version {w.version}, SHA-256 {String(w.coefficientsSha256).slice(0, 12)}…
          </p>
          {w.validity.warnings.length > 0 && <p className="text-xs text-caution">{w.validity.warnings.join(" ")}</p>}
          <HeatmapFigure
            title={`Exact worst case max |c| on ||a|| ≤ ${w.budgetRmsNm} nm · ${slug} v${version}`}
            kind="magnitude"
            thetaNrad={w.thetaNrad}
            maps={[
              { label: "|c_x| max", title: "c_x: exact", values: flat(w.exactPmPerNrad.x), marker: w.worst.axis === "x" ? marker : null },
              { label: "|c_y| max", title: "c_y: exact", values: flat(w.exactPmPerNrad.y), marker: w.worst.axis === "y" ? marker : null },
            ]}
            quantity="largest |TTL| within the budget"
            domain={spanOf(flat(w.exactPmPerNrad.x), flat(w.exactPmPerNrad.y))}
            note={<p className="text-xs text-muted">The colour bar spans the maps&apos; own range (not from zero), so the variation over the map shows.</p>}
            testId="worst-exact-maps"
          />
          <HeatmapFigure
            title={`Simple bound |c0| + ||A|| r + |λ|max(B) r² · ${slug} v${version}`}
            kind="magnitude"
            thetaNrad={w.thetaNrad}
            maps={[
              { label: "bound c_x", title: "c_x: bound", values: flat(w.boundPmPerNrad.x) },
              { label: "bound c_y", title: "c_y: bound", values: flat(w.boundPmPerNrad.y) },
            ]}
            domain={spanOf(flat(w.boundPmPerNrad.x), flat(w.boundPmPerNrad.y))}
            testId="worst-bound-maps"
          />
          <div className="flex flex-wrap items-start gap-4">
            {worstPicture && (
              <PupilMapFigure
                title={`Maximising wavefront W(x, y) · ${slug} v${version}`}
                samples={PICTURE_SAMPLES}
                maps={[{ label: "W", title: `total ${formatNumber(w.worst.totalRmsNm, 4)} nm RMS`, column: "w_nm", values: worstPicture }]}
                comments={[`the wavefront inside ${w.budgetRmsNm} nm RMS that reaches ${w.worst.valuePmPerNrad} pm/nrad on c_${w.worst.axis} at (${w.worst.thetaXNrad}, ${w.worst.thetaYNrad}) nrad`]}
                testId="worst-pupil"
              />
            )}
            <CoefficientBars title={`Maximising wavefront (total ${formatNumber(w.worst.totalRmsNm, 4)} nm RMS)`} coefficients={w.worst.wavefront.coefficientsNm} testId="worst-wavefront" />
          </div>
          <div className="flex flex-wrap gap-2">
            <button type="button" className={quietButtonClass} onClick={() => downloadJson({ ...w.worst.wavefront, notice: w.notice }, `${slug}-v${version}-worst-wavefront.json`)} data-testid="worst-download">
              Download the wavefront (JSON)
            </button>
            <button type="button" className={quietButtonClass} disabled={exact.busy} onClick={() => exact.post(`${base}/exact`, { wavefront: w.worst.wavefront })} data-testid="worst-exact">
              {exact.busy ? "Propagating…" : "Propagate it exactly"}
            </button>
          </div>
          <Failure error={exact.error} />
          {exact.data && (
            <p className="text-sm" data-testid="worst-exact-result">
              At the worst node: exact c<sub>{w.worst.axis}</sub> {exactAtWorst === null ? "undefined (far-field null)" : `${formatNumber(exactAtWorst, 4)} pm/nrad`}, model {formatNumber(w.worst.signedValuePmPerNrad, 4)} pm/nrad; exact peak over the map {formatNumber(exact.data.exact.peakAbsTtlPmPerNrad, 4)} pm/nrad.
            </p>
          )}
        </>
      )}
    </Panel>
  );
}

function RequirementsPanel({ base, slug, version, defaults }: Shared & { defaults: { budgetRmsNm: number; jitterNrad: number } }) {
  const [tau, setTau] = useState("0.1");
  const [budget, setBudget] = useState(String(defaults.budgetRmsNm));
  const [samples, setSamples] = useState("1000000");
  const [seed, setSeed] = useState("1");
  const [limits, setLimits] = useState<"uniform" | "per-term">("uniform");
  const start = useCall();
  const [run, setRun] = useState<Json | null>(null);
  const cancel = useCall();
  const runId = start.data?.run?.id as number | undefined;
  useEffect(() => {
    if (!runId) return;
    let stopped = false;
    const poll = async () => {
      while (!stopped) {
        const response = await fetch(`/api/v1/runs/${runId}`);
        if (response.ok) {
          const body = (await response.json()) as Json;
          setRun(body);
          if (!["queued", "running"].includes(body.state)) return;
        }
        await new Promise((resolve) => setTimeout(resolve, 1000));
      }
    };
    void poll();
    return () => {
      stopped = true;
    };
  }, [runId]);
  const result = run?.state === "succeeded" ? (run.result as Json) : null;
  return (
    <Panel id="requirements-heading" title="Requirements that guarantee a TTL budget">
      <div className="flex flex-wrap items-end gap-3">
        <NumberField label="TTL budget (pm/nrad)" value={tau} onChange={setTau} />
        <NumberField label="WFE budget (nm RMS)" value={budget} onChange={setBudget} />
        <NumberField label="Monte Carlo samples" value={samples} onChange={setSamples} />
        <NumberField label="Seed" value={seed} onChange={setSeed} />
        <label className={labelClass}>
          Limits verified
          <select className="rounded border border-line bg-surface px-2 py-1 text-sm" value={limits} onChange={(e) => setLimits(e.target.value as "uniform" | "per-term")}>
            <option value="uniform">one per kind (headline)</option>
            <option value="per-term">per term, by coupling</option>
          </select>
        </label>
        <button
          type="button"
          className={quietButtonClass}
          disabled={start.busy}
          onClick={() => {
            setRun(null);
            void start.post(`${base}/requirements`, { ttlBudgetPmPerNrad: Number(tau), budgetRmsNm: Number(budget), samples: Number(samples), seed: Number(seed), limits });
          }}
          data-testid="requirements-run"
        >
          Derive and verify
        </button>
      </div>
      <Failure error={start.error ?? cancel.error} />
      {run && (
        <div className="flex flex-wrap items-center gap-3 text-sm" data-testid="requirements-progress">
          <span>
            Run <a className="underline" href={`/runs/${run.id}`}>#{run.id}</a> {run.state}
          </span>
          <progress max={1} value={run.progress.fraction} aria-label="Monte Carlo progress" />
          <span>
            {run.progress.done.toLocaleString()} / {run.progress.total.toLocaleString()} samples, ETA {formatDuration(run.progress.etaSeconds)}
          </span>
          {["queued", "running"].includes(run.state) && (
            <button type="button" className={quietButtonClass} onClick={() => cancel.post(`/api/v1/runs/${run.id}/cancel`, {})} data-testid="requirements-cancel">
              Cancel
            </button>
          )}
          {run.error && <span className="text-fault">{run.error}</span>}
        </div>
      )}
      {result && (
        <>
          <p className="text-sm" data-testid="requirements-summary">
            Every |a<sub>i</sub>| ≤ {formatNumber(Object.values(result.linearLimitsNm as Record<string, number>)[0], 4)} nm (and so every |a<sub>i</sub>a<sub>j</sub>| ≤{" "}
            {formatNumber(Object.values(result.crossLimitsNm2 as Record<string, number>)[0], 4)} nm²) keeps |TTL| ≤ {formatNumber(result.boundPmPerNrad, 4)} pm/nrad everywhere on the map (budget {result.ttlBudgetPmPerNrad} pm/nrad). Monte Carlo of {result.verified.samples.toLocaleString()} wavefronts inside the {result.verified.limits} limits: worst {formatNumber(result.verified.worstPmPerNrad, 4)} pm/nrad on the model ({formatNumber(100 * result.verified.budgetFractionUsed, 3)} % of the budget); the {result.verified.worstSamples.length} worst propagated exactly: worst {formatNumber(result.verified.exactWorstPmPerNrad, 4)} pm/nrad, {result.verified.exactOverBudget} above the budget.
          </p>
          <p className="text-xs text-muted" data-testid="requirements-per-term-note">
            Per-term limits share the TTL budget among the terms in proportion to each term&apos;s coupling g (its largest TTL per nm within {result.budgetRmsNm} nm RMS): a term
            takes (budget − TTL at zero WFE) · g / Σg and its limit is the amplitude at which it uses that share; one common factor then makes the bound hold at every node
            ({formatNumber(result.perTerm.boundPmPerNrad, 4)} pm/nrad). Where the TTL is linear in the terms this gives every term the same limit as the headline; the
            limits differ where square and product terms matter.
          </p>
          <RankedBarChart
            title={`Per-term limits, TTL budget shared in proportion to coupling · ${slug} v${version}`}
            items={Object.entries(result.perTerm.linearLimitsNm as Record<string, number>).map(([k, v]) => ({
              label: result.perTerm.sharePmPerNrad ? `Z${k} (share ${formatNumber(result.perTerm.sharePmPerNrad[k], 2)} pm/nrad)` : `Z${k}`,
              value: v,
              group: "limit",
            }))}
            groups={[{ key: "limit", label: "limit", colour: "rgb(var(--sp-accent))" }]}
            valueLabel="limit"
            unit="nm"
            rankLabel="term"
            log={false}
            testId="requirements-per-term"
          />
          <RankedBarChart
            title="Per-wavefront peak |TTL| on the model (histogram)"
            items={(result.verified.histogram.counts as number[]).map((n, k) => ({
              label: k === result.verified.histogram.counts.length - 1 ? `> ${formatNumber(k * result.verified.histogram.binWidthPmPerNrad, 3)}` : `${formatNumber(k * result.verified.histogram.binWidthPmPerNrad, 3)}–${formatNumber((k + 1) * result.verified.histogram.binWidthPmPerNrad, 3)}`,
              value: n,
              group: (k + 1) * result.verified.histogram.binWidthPmPerNrad <= result.ttlBudgetPmPerNrad ? "inside" : "above",
            }))}
            groups={[
              { key: "inside", label: "within the budget", colour: "rgb(var(--sp-accent))" },
              { key: "above", label: "above the budget", colour: "rgb(var(--sp-fault))", marked: true },
            ]}
            valueLabel="wavefronts"
            unit="count"
            rankLabel="bin"
            log={false}
            note={
              <p className="text-xs text-muted">
                Bin k holds the wavefronts whose peak lies in [(k − 1) w, k w) with w = {formatNumber(result.verified.histogram.binWidthPmPerNrad, 3)} pm/nrad (1.25 × budget / 40); the
                last bin holds every peak above 1.25 × the budget; bars right of the budget ({result.ttlBudgetPmPerNrad} pm/nrad, bin {Math.round(result.ttlBudgetPmPerNrad / result.verified.histogram.binWidthPmPerNrad)}) are marked.
              </p>
            }
            testId="requirements-histogram"
          />
          <table className="text-xs" data-testid="requirements-worst">
            <thead>
              <tr>
                <th className={thClass}>#</th>
                <th className={thClass}>model peak (pm/nrad)</th>
                <th className={thClass}>exact peak (pm/nrad)</th>
              </tr>
            </thead>
            <tbody>
              {(result.verified.worstSamples as Json[]).slice(0, 10).map((s, k) => (
                <tr key={k}>
                  <td className={tdClass}>{k + 1}</td>
                  <td className={tdClass}>{formatNumber(s.modelPeakPmPerNrad, 4)}</td>
                  <td className={tdClass}>{formatNumber(s.exactPeakPmPerNrad, 4)}</td>
                </tr>
              ))}
            </tbody>
          </table>
          <button type="button" className={quietButtonClass} onClick={() => downloadJson(result, `${slug}-v${version}-requirements.json`)}>
            Download the requirements (JSON)
          </button>
        </>
      )}
    </Panel>
  );
}

function ModesPanel({ base, slug, version, wavefront }: Shared) {
  const run = useCall();
  const m = run.data;
  const modes = (m?.modes ?? []) as Json[];
  const first = modes[0];
  const last = modes[modes.length - 1];
  const leadingPicture = usePupilPicture(m?.ordering, first?.coefficientsNm);
  const trailingPicture = usePupilPicture(m?.ordering, last?.coefficientsNm);
  return (
    <Panel id="modes-heading" title="Coupling modes">
      <div className="flex flex-wrap items-end gap-3">
        <button type="button" className={quietButtonClass} disabled={run.busy} onClick={() => run.post(`${base}/modes`, wavefront ? { wavefront } : {})} data-testid="modes-run">
          {run.busy ? "Computing…" : "Compute the modes (and split the wavefront)"}
        </button>
      </div>
      <Failure error={run.error} />
      {m && modes.length > 0 && (
        <>
          <RankedBarChart
            title={`Singular values of the linear maps · ${slug} v${version}`}
            items={modes.map((mode, k) => ({ label: `mode ${k + 1}`, value: mode.singularValue, group: "sigma" }))}
            groups={[{ key: "sigma", label: "σ", colour: "rgb(var(--sp-accent))" }]}
            valueLabel="singular value"
            unit="pm/nrad per nm"
            rankLabel="mode"
            testId="modes-sigma"
          />
          {leadingPicture && trailingPicture && (
            <PupilMapFigure
              title={`Pupil maps of 1 nm RMS of the leading and the trailing mode · ${slug} v${version}`}
              samples={PICTURE_SAMPLES}
              maps={[
                { label: "mode 1", title: `mode 1 (σ ${formatNumber(first.singularValue, 3)})`, column: "mode_1_nm", values: leadingPicture },
                { label: `mode ${modes.length}`, title: `mode ${modes.length} (σ ${formatNumber(last.singularValue, 3)})`, column: `mode_${modes.length}_nm`, values: trailingPicture },
              ]}
              comments={["W(x, y) of a unit-norm combination of the model's terms (1 nm RMS in total); σ in pm/nrad per nm"]}
              testId="modes-pupil"
            />
          )}
          <div className="flex flex-wrap items-start gap-4" data-testid="modes-maps">
            {[
              { k: 1, mode: first },
              { k: modes.length, mode: last },
            ].map(({ k, mode }) => (
              <HeatmapFigure
                key={k}
                title={`Linear TTL of 1 nm of mode ${k} (σ ${formatNumber(mode.singularValue, 3)}) · ${slug} v${version}`}
                kind="signed"
                thetaNrad={m.thetaNrad}
                maps={[
                  { label: `c_x`, title: "c_x", column: `mode_${k}_c_x`, values: flat(mode.ttlPmPerNrad.x) },
                  { label: `c_y`, title: "c_y", column: `mode_${k}_c_y`, values: flat(mode.ttlPmPerNrad.y) },
                ]}
                size={180}
                note={
                  k > 1 && mode.singularValue < 1e-9 * first.singularValue ? (
                    <p className="max-w-md text-xs text-muted">
                      σ is below 10⁻⁹ of the leading mode&apos;s: this combination does not couple on this model, and its map is rounding.
                    </p>
                  ) : undefined
                }
              />
            ))}
          </div>
          <CoefficientBars title="Leading mode: weights of the terms" coefficients={modes[0].coefficientsNm} unit="per nm" />
          {modes[0].projection && (
            <RankedBarChart
              title="The wavefront's linear TTL by mode (share of its energy)"
              items={modes.map((mode, k) => ({ label: `mode ${k + 1}`, value: mode.projection.energyFraction, group: "share" }))}
              groups={[{ key: "share", label: "share", colour: "rgb(var(--sp-accent))" }]}
              valueLabel="energy share"
              unit="fraction"
              rankLabel="mode"
              testId="modes-split"
            />
          )}
        </>
      )}
    </Panel>
  );
}

function CorrectionPanel({ base, slug, version, wavefront, indices }: Shared) {
  const [adjustable, setAdjustable] = useState(String(indices[0]));
  const [limit, setLimit] = useState("20");
  const run = useCall();
  const exactBefore = useCall();
  const exactAfter = useCall();
  const c = run.data;
  const adjustableIndices = parseIndexList(adjustable);
  return (
    <Panel id="correction-heading" title="Correction of the wavefront">
      <div className="flex flex-wrap items-end gap-3">
        <label className={labelClass}>
          Adjustable terms
          <input className={inputClass} value={adjustable} onChange={(e) => setAdjustable(e.target.value)} data-testid="correction-terms" />
        </label>
        <NumberField label="Limit per term (± nm)" value={limit} onChange={setLimit} />
        <button
          type="button"
          className={quietButtonClass}
          disabled={run.busy || !wavefront || !adjustableIndices}
          onClick={() => run.post(`${base}/correction`, { wavefront, adjustable: { ordering: wavefront?.ordering ?? "noll", indices: adjustableIndices }, limitNm: Number(limit) })}
          data-testid="correction-run"
        >
          {run.busy ? "Computing…" : "Find the correction"}
        </button>
      </div>
      <Failure error={run.error} />
      {c && (
        <>
          <p className="text-sm" data-testid="correction-summary">
            Peak |TTL| {formatNumber(c.before.peakAbsTtlPmPerNrad, 4)} → {formatNumber(c.after.peakAbsTtlPmPerNrad, 4)} pm/nrad with{" "}
            {Object.entries(c.adjustmentNm as Record<string, number>)
              .map(([k, v]) => `Z${k} ${v >= 0 ? "+" : ""}${formatNumber(v, 4)} nm`)
              .join(", ")}
            .
          </p>
          <HeatmapFigure
            title={`c_x before and after the correction · ${slug} v${version}`}
            kind="signed"
            thetaNrad={run.data!.thetaNrad}
            maps={[
              { label: "before", title: "before", values: flat(c.before.ttlPmPerNrad.x) },
              { label: "after", title: "after", values: flat(c.after.ttlPmPerNrad.x) },
            ]}
            testId="correction-maps"
          />
          <div className="flex flex-wrap gap-2">
            <button type="button" className={quietButtonClass} disabled={exactBefore.busy || exactAfter.busy} onClick={() => { void exactBefore.post(`${base}/exact`, { wavefront }); void exactAfter.post(`${base}/exact`, { wavefront: c.corrected }); }} data-testid="correction-exact">
              Propagate both exactly
            </button>
            <button type="button" className={quietButtonClass} onClick={() => downloadJson({ ...c.corrected, notice: c.notice }, `${slug}-v${version}-corrected-wavefront.json`)}>
              Download the corrected wavefront (JSON)
            </button>
          </div>
          <Failure error={exactBefore.error ?? exactAfter.error} />
          {exactBefore.data && exactAfter.data && (
            <p className="text-sm" data-testid="correction-exact-result">
              Exact peak |TTL| {formatNumber(exactBefore.data.exact.peakAbsTtlPmPerNrad, 4)} → {formatNumber(exactAfter.data.exact.peakAbsTtlPmPerNrad, 4)} pm/nrad.
            </p>
          )}
        </>
      )}
    </Panel>
  );
}

/** "f, value" per line (a CSV of two columns; a header line is skipped). */
function parsePairs(text: string): [number, number][] | null {
  const rows = text
    .split(/\r?\n/)
    .map((l) => l.trim())
    .filter((l) => l !== "")
    .map((l) => l.split(/[\s,;]+/).map(Number));
  const numeric = rows.filter((r) => r.length >= 2 && r.slice(0, 2).every(Number.isFinite));
  if (numeric.length < rows.length - 1 || numeric.length < 2) return null;
  return numeric.map((r) => [r[0], r[1]]);
}

function NoisePanel({ base, slug, version, wavefront }: Shared) {
  const [jitterText, setJitterText] = useState("0.0001, 30\n0.001, 10\n0.01, 3\n0.1, 1\n1, 0.5");
  const [allocationText, setAllocationText] = useState("0.0001, 10\n0.003, 1\n1, 1");
  const [offset, setOffset] = useState("worst");
  const run = useCall();
  const n = run.data;
  const jitter = parsePairs(jitterText);
  const allocation = parsePairs(allocationText);
  const offsetValue = offset.trim() === "worst" ? null : offset.split(/[\s,;]+/).map(Number);
  return (
    <Panel id="noise-heading" title="Noise budget">
      <div className="flex flex-wrap items-end gap-3">
        <label className={labelClass}>
          Jitter ASD (Hz, nrad/√Hz per line)
          <textarea className="h-24 w-48 rounded border border-line bg-surface p-1 font-mono text-xs" value={jitterText} onChange={(e) => setJitterText(e.target.value)} />
        </label>
        <label className={labelClass}>
          Allocation (Hz, pm/√Hz per line)
          <textarea className="h-24 w-48 rounded border border-line bg-surface p-1 font-mono text-xs" value={allocationText} onChange={(e) => setAllocationText(e.target.value)} />
        </label>
        <label className={labelClass}>
          DC offset θx, θy (nrad) or “worst”
          <input className={inputClass} value={offset} onChange={(e) => setOffset(e.target.value)} />
        </label>
        <label className={labelClass}>
          Or upload a CSV for the jitter
          <input
            type="file"
            accept=".csv,text/csv,text/plain"
            className="text-xs"
            onChange={async (e) => {
              const file = e.target.files?.[0];
              if (file) setJitterText(await file.text());
            }}
          />
        </label>
        <button
          type="button"
          className={quietButtonClass}
          disabled={run.busy || !wavefront || !jitter || !allocation}
          onClick={() => run.post(`${base}/noise`, { wavefront, offsetNrad: offsetValue, jitterAsd: jitter, allocation })}
          data-testid="noise-run"
        >
          Compute
        </button>
      </div>
      {(!jitter || !allocation) && <p className="text-xs text-fault">Each spectrum needs at least two lines of “frequency, density”.</p>}
      <Failure error={run.error} />
      {n && (
        <>
          <p className="text-sm" data-testid="noise-summary">
            At θ = ({formatNumber(n.offsetNrad[0], 3)}, {formatNumber(n.offsetNrad[1], 3)}) nrad{n.worstOffset ? " (the worst node)" : ""}: √(c<sub>x</sub>² + c<sub>y</sub>²) = {formatNumber(n.couplingPmPerNrad, 4)} pm/nrad.{" "}
            {n.failingHz.length === 0 ? "The allocation holds at every frequency." : `The allocation fails at ${n.failingHz.map((f: number) => `${formatNumber(f, 3)} Hz`).join(", ")}.`}
          </p>
          <LineChart
            title={`TTL noise against the allocation · ${slug} v${version}`}
            series={[
              { label: "TTL noise", column: "ttl_noise_pm_per_rthz", x: n.frequencyHz, y: n.ttlNoisePmPerRtHz, glyph: "line", colour: "rgb(var(--sp-accent))" },
              { label: "allocation", column: "allocation_pm_per_rthz", x: n.frequencyHz, y: n.allocationPmPerRtHz, glyph: "dash", colour: "rgb(var(--sp-caution))" },
            ]}
            xLabel="frequency (Hz)"
            yLabel="pm/√Hz"
            testId="noise-chart"
          />
          <table className="text-xs" data-testid="noise-margins">
            <thead>
              <tr>
                <th className={thClass}>f (Hz)</th>
                <th className={thClass}>TTL noise (pm/√Hz)</th>
                <th className={thClass}>allocation (pm/√Hz)</th>
                <th className={thClass}>margin (dB)</th>
              </tr>
            </thead>
            <tbody>
              {(n.frequencyHz as number[]).map((f, k) => (
                <tr key={f} className={n.marginDb[k] !== null && n.marginDb[k] < 0 ? "text-fault" : ""}>
                  <td className={tdClass}>{formatNumber(f, 3)}</td>
                  <td className={tdClass}>{formatNumber(n.ttlNoisePmPerRtHz[k], 4)}</td>
                  <td className={tdClass}>{formatNumber(n.allocationPmPerRtHz[k], 4)}</td>
                  <td className={tdClass}>
                    {formatNumber(n.marginDb[k], 3)}
                    {n.marginDb[k] !== null && n.marginDb[k] < 0 ? " fails" : ""}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </>
      )}
    </Panel>
  );
}

function FitPanel({ base, slug, version, ordering, indices, setWavefrontText, apertureDiameterM }: Shared & { apertureDiameterM: number }) {
  const [file, setFile] = useState<File | null>(null);
  const [pixel, setPixel] = useState("");
  const [aperture, setAperture] = useState(String(apertureDiameterM));
  const [units, setUnits] = useState<"nm" | "m">("nm");
  const [tau, setTau] = useState("0.1");
  const fit = useCall();
  const evaluation = useCall();
  async function upload() {
    if (!file) return;
    const form = new FormData();
    form.set("file", file, file.name);
    form.set("pixelSizeM", pixel);
    form.set("apertureDiameterM", aperture);
    form.set("units", units);
    form.set("zernike", JSON.stringify({ ordering, indices }));
    evaluation.setData(null);
    await fit.call("/api/v1/wavefronts/fit", { method: "POST", body: form });
  }
  const f = fit.data;
  const peak = evaluation.data?.results?.[0]?.peakAbsTtlPmPerNrad as number | undefined;
  return (
    <Panel id="fit-heading" title="Measured wavefront">
      <div className="flex flex-wrap items-end gap-3">
        <label className={labelClass}>
          Height map (.npy 2-D float, or CSV grid; NaN = no data)
          <input type="file" accept=".npy,.csv,.txt" className="text-xs" onChange={(e) => setFile(e.target.files?.[0] ?? null)} data-testid="fit-file" />
        </label>
        <NumberField label="Pixel size (m)" value={pixel} onChange={setPixel} testId="fit-pixel" />
        <NumberField label="Aperture diameter (m)" value={aperture} onChange={setAperture} />
        <label className={labelClass}>
          Units
          <select className="rounded border border-line bg-surface px-2 py-1 text-sm" value={units} onChange={(e) => setUnits(e.target.value as "nm" | "m")}>
            <option value="nm">nm</option>
            <option value="m">m</option>
          </select>
        </label>
        <button type="button" className={quietButtonClass} disabled={fit.busy || !file} onClick={upload} data-testid="fit-run">
          {fit.busy ? "Fitting…" : "Fit"}
        </button>
      </div>
      <Failure error={fit.error} />
      {f && (
        <>
          <p className="text-sm" data-testid="fit-summary">
            {f.samplesInAperture.toLocaleString()} pixels inside the aperture ({f.rows} × {f.cols} {f.format}); map RMS {formatNumber(f.mapRmsNm, 4)} nm, residual RMS {formatNumber(f.residualRmsNm, 4)} nm after the fit (piston and tilt removed:{" "}
            {Object.entries(f.removedNm as Record<string, number>)
              .map(([k, v]) => `Z${k} ${formatNumber(v, 3)} nm`)
              .join(", ")}
            ).
          </p>
          <div className="flex flex-wrap items-start gap-4">
            <PupilMapFigure
              title="Measured map and its fit"
              samples={f.pictures.samples}
              maps={[
                { label: "map", title: `map (${formatNumber(f.mapRmsNm, 4)} nm RMS)`, column: "map_nm", values: f.pictures.mapNm },
                { label: "fit", title: "fit (with piston and tilt)", column: "fit_nm", values: f.pictures.fitNm },
              ]}
              surrogate={false}
              comments={["nearest pixel at each cell centre, 6 significant digits; the fit and its RMS use every pixel"]}
              testId="fit-pupil"
            />
            <PupilMapFigure
              title="Residual: map minus fit"
              samples={f.pictures.samples}
              maps={[{ label: "residual", title: `residual (${formatNumber(f.residualRmsNm, 4)} nm RMS)`, column: "residual_nm", values: f.pictures.residualNm }]}
              surrogate={false}
              comments={["nearest pixel at each cell centre, 6 significant digits; the residual RMS uses every pixel"]}
              testId="fit-residual"
            />
          </div>
          <CoefficientBars title="Fitted Zernike coefficients" coefficients={f.wavefront.coefficientsNm} testId="fit-bars" />
          <div className="flex flex-wrap items-end gap-3">
            <button type="button" className={quietButtonClass} onClick={() => setWavefrontText(JSON.stringify(f.wavefront))}>
              Use as the wavefront above
            </button>
            <NumberField label="TTL budget (pm/nrad)" value={tau} onChange={setTau} />
            <button type="button" className={quietButtonClass} disabled={evaluation.busy} onClick={() => evaluation.post(`${base}/evaluate`, { wavefronts: [f.wavefront], output: "summary" })} data-testid="fit-evaluate">
              Evaluate on {slug} v{version}
            </button>
          </div>
          <Failure error={evaluation.error} />
          {peak !== undefined && (
            <p className={`text-sm ${peak <= Number(tau) ? "" : "text-fault"}`} data-testid="fit-verdict">
              Peak |TTL| on the model {formatNumber(peak, 4)} pm/nrad: {peak <= Number(tau) ? "passes" : "fails"} the budget of {tau} pm/nrad.
              {evaluation.data!.results[0].validity.warnings.length > 0 && ` ${evaluation.data!.results[0].validity.warnings.join(" ")}`}
            </p>
          )}
        </>
      )}
    </Panel>
  );
}
