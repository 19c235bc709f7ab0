"use client";

import { useEffect, useId, useMemo, useState } from "react";
import { quietButtonClass } from "@/components/empty-state";
import { formatNumber } from "@/components/format";
import { HeatmapFigure } from "@/components/plots/heatmap";
import { colourDomain } from "@/components/plots/plot-data";

export interface ValidationChoice {
  key: string;
  label: string;
  rmsNm: number;
  /** The version's largest |error| on it, when recorded. */
  maxAbsErrorPmPerNrad: number | null;
  coefficientsNm: Record<string, number>;
}

interface MapAnswer {
  results: { ttlXPmPerNrad: number[][]; ttlYPmPerNrad: number[][]; peakAbsTtlPmPerNrad: number; validity: { inRange: boolean; warnings: string[] } }[];
}

interface Problem {
  title?: string;
  detail?: string;
  issues?: { path: string; message: string }[];
}

/** "4: 6, 7: -4.5" -> { "4": 6, "7": -4.5 }; the server checks the indices and values against the model. */
export function parseWavefront(text: string): { coefficientsNm: Record<string, number> } | { error: string } {
  const coefficientsNm: Record<string, number> = {};
  for (const part of text.split(/[,;\n]+/).map((p) => p.trim()).filter(Boolean)) {
    const match = /^Z?(\d+)\s*[:=]\s*(\S+)$/i.exec(part);
    if (!match || !Number.isFinite(Number(match[2]))) return { error: `“${part}” is not “Noll index: nm”, e.g. “4: 6”.` };
    coefficientsNm[match[1]] = Number(match[2]);
  }
  return { coefficientsNm };
}

const asText = (coefficients: Record<string, number>) =>
  Object.entries(coefficients)
    .filter(([, v]) => v !== 0)
    .map(([j, v]) => `${j}: ${Number(v.toPrecision(6))}`)
    .join(", ");

async function evaluate(slug: string, version: number, coefficientsNm: Record<string, number>): Promise<MapAnswer["results"][number]> {
  const response = await fetch(`/api/v1/models/${encodeURIComponent(slug)}/versions/${version}/evaluate`, {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify({ wavefronts: [{ ordering: "noll", coefficientsNm }], output: "map" }),
  });
  const body = await response.json();
  if (!response.ok) {
    const p = body as Problem;
    throw new Error(`version ${version}: ${[p.detail ?? p.title ?? `the server answered ${response.status}`, ...(p.issues ?? []).map((i) => `${i.path}: ${i.message}`)].join(" ")}`);
  }
  return (body as MapAnswer).results[0];
}

/**
 * The two versions' maps for one wavefront (typed, the demo's example, or a validation wavefront) on one colour
 * scale, and their difference A − B; both evaluated through the evaluate route with the browser's session.
 */
export function CompareMaps({
  slug,
  a,
  b,
  nollIndices,
  thetaNrad,
  example,
  validation,
}: {
  slug: string;
  a: number;
  b: number;
  nollIndices: number[];
  thetaNrad: number[];
  example: Record<string, number>;
  validation: ValidationChoice[];
}) {
  const [text, setText] = useState(() => asText(example));
  const [source, setSource] = useState("example");
  const [answer, setAnswer] = useState<{ a: MapAnswer["results"][number]; b: MapAnswer["results"][number]; wavefront: string } | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const textId = useId();
  const sourceId = useId();
  const worst = useMemo(
    () => validation.filter((v) => v.maxAbsErrorPmPerNrad !== null).reduce<ValidationChoice | null>((w, v) => (w === null || v.maxAbsErrorPmPerNrad! > w.maxAbsErrorPmPerNrad! ? v : w), null),
    [validation],
  );

  async function run(wavefrontText: string) {
    const parsed = parseWavefront(wavefrontText);
    if ("error" in parsed) {
      setError(parsed.error);
      return;
    }
    setBusy(true);
    setError(null);
    try {
      // Both answers awaited, so that a wavefront both versions refuse is reported for A, then B, whichever came first.
      const [ra, rb] = await Promise.allSettled([evaluate(slug, a, parsed.coefficientsNm), evaluate(slug, b, parsed.coefficientsNm)]);
      if (ra.status === "rejected" || rb.status === "rejected") {
        throw new Error([ra, rb].flatMap((r) => (r.status === "rejected" ? [(r.reason as Error).message] : [])).join("; "));
      }
      setAnswer({ a: ra.value, b: rb.value, wavefront: asText(parsed.coefficientsNm) });
    } catch (caught) {
      setError(`The maps could not be evaluated: ${(caught as Error).message}`);
    } finally {
      setBusy(false);
    }
  }

  useEffect(() => {
    void run(asText(example));
    // Evaluate the example once on arrival; later runs follow the reviewer's choices.
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [slug, a, b]);

  function choose(key: string) {
    setSource(key);
    const coefficients = key === "example" ? example : validation.find((v) => v.key === key)?.coefficientsNm;
    if (!coefficients) return;
    const next = asText(coefficients);
    setText(next);
    void run(next);
  }

  const flat = (grid: number[][]) => grid.flat();
  const maps = answer && {
    ax: flat(answer.a.ttlXPmPerNrad),
    ay: flat(answer.a.ttlYPmPerNrad),
    bx: flat(answer.b.ttlXPmPerNrad),
    by: flat(answer.b.ttlYPmPerNrad),
  };
  const difference = maps && { x: maps.ax.map((v, i) => v - maps.bx[i]), y: maps.ay.map((v, i) => v - maps.by[i]) };
  const shared = maps ? colourDomain("signed", maps.ax, maps.ay, maps.bx, maps.by) : undefined;
  const largest = difference ? Math.max(...difference.x.map(Math.abs), ...difference.y.map(Math.abs)) : 0;
  const comment = answer ? [`wavefront (Noll: nm RMS) ${answer.wavefront}`, `${slug} v${a} and v${b}`] : [];

  return (
    <div className="flex flex-col gap-3">
      <div className="flex flex-wrap items-end gap-3 text-sm">
        <label htmlFor={sourceId} className="flex flex-col gap-1">
          <span className="text-xs text-muted">Wavefront</span>
          <select id={sourceId} value={source} onChange={(event) => choose(event.target.value)} className="max-w-xs rounded border border-line bg-surface px-2 py-1 text-xs" data-testid="wavefront-source">
            <option value="example">the demo&apos;s example wavefront</option>
            <option value="typed">typed below</option>
            {worst && <option value={worst.key}>worst of {worst.label.replace(/ validation wavefront \d+$/, "")}&apos;s validation set ({formatNumber(worst.rmsNm, 3)} nm)</option>}
            {validation.map((v) => (
              <option key={v.key} value={v.key}>
                {v.label}: {formatNumber(v.rmsNm, 3)} nm RMS{v.maxAbsErrorPmPerNrad !== null ? `, error ${formatNumber(v.maxAbsErrorPmPerNrad, 3)} pm/nrad` : ""}
              </option>
            ))}
          </select>
        </label>
        <label htmlFor={textId} className="flex min-w-72 flex-1 flex-col gap-1">
          <span className="text-xs text-muted">Noll index: nm RMS, separated by commas (indices {nollIndices[0]}–{nollIndices[nollIndices.length - 1]})</span>
          <input
            id={textId}
            value={text}
            onChange={(event) => {
              setText(event.target.value);
              setSource("typed");
            }}
            className="rounded border border-line bg-surface px-2 py-1 font-mono text-xs"
            data-testid="wavefront-text"
          />
        </label>
        <button type="button" className={quietButtonClass} onClick={() => run(text)} disabled={busy} data-testid="compare-run">
          {busy ? "Evaluating…" : "Evaluate both"}
        </button>
      </div>
      {validation.length === 0 && <p className="text-xs text-muted">Neither version has a seeded validation set to pick from: type a wavefront or take the example.</p>}
      {error && (
        <p role="alert" className="rounded border border-fault bg-fault-soft px-3 py-2 text-sm text-fault" data-testid="compare-error">
          {error}
        </p>
      )}
      {answer && maps && difference && (
        <div className={`flex flex-col gap-4 ${busy ? "opacity-60" : ""}`} data-testid="compare-maps" data-wavefront={answer.wavefront}>
          <p className="text-sm" data-testid="difference-summary">
            Largest |A − B| <span className="font-mono font-medium">{formatNumber(largest, 3)}</span> pm/nrad; peak |c| of version {a}{" "}
            <span className="font-mono">{formatNumber(answer.a.peakAbsTtlPmPerNrad, 4)}</span>, of version {b}{" "}
            <span className="font-mono">{formatNumber(answer.b.peakAbsTtlPmPerNrad, 4)}</span> pm/nrad
            {[answer.a, answer.b].some((r) => !r.validity.inRange) && <span className="text-caution"> (outside a validity range: trust the maps less)</span>}.
          </p>
          <HeatmapFigure
            title={`Version ${a} − version ${b}`}
            kind="signed"
            quantity={`surrogate v${a} − surrogate v${b}`}
            thetaNrad={thetaNrad}
            comments={comment}
            testId="difference-maps"
            maps={[
              { label: "c_x", title: `c_x: v${a} − v${b}`, column: "difference_x_pm_per_nrad", values: difference.x },
              { label: "c_y", title: `c_y: v${a} − v${b}`, column: "difference_y_pm_per_nrad", values: difference.y },
            ]}
          />
          <div className="flex flex-wrap gap-6">
            {(
              [
                [a, maps.ax, maps.ay],
                [b, maps.bx, maps.by],
              ] as const
            ).map(([version, x, y]) => (
              <HeatmapFigure
                key={version}
                title={`Version ${version} (one scale for both versions)`}
                kind="signed"
                quantity={`surrogate c of v${version}`}
                thetaNrad={thetaNrad}
                domain={shared}
                size={180}
                comments={comment}
                testId={`version-maps-${version}`}
                maps={[
                  { label: "c_x", title: "c_x", column: "ttl_x_pm_per_nrad", values: x },
                  { label: "c_y", title: "c_y", column: "ttl_y_pm_per_nrad", values: y },
                ]}
              />
            ))}
          </div>
        </div>
      )}
    </div>
  );
}
