"use client";

import Link from "next/link";
import { usePathname, useRouter, useSearchParams } from "next/navigation";
import { useId, useTransition } from "react";
import { linkClass, tdClass, thClass } from "@/components/empty-state";
import { formatNumber } from "@/components/format";
import { RankedBarChart } from "@/components/plots/bar-chart";
import { HeatmapFigure } from "@/components/plots/heatmap";

export interface TermChoice {
  /** The term as the core writes it (`1`, `Z5`, `Z5*Z7`): the `term` search parameter. */
  key: string;
  name: string;
  degree: number;
}

export interface RankedTerm extends TermChoice {
  maxAbsCoefficient: number;
  ttlBoundPmPerNrad: number;
  noiseBoundPm: number;
}

const KINDS = ["constant", "linear", "product"] as const;
const coefficientUnit = (degree: number) => (degree === 0 ? "pm/nrad" : degree === 1 ? "pm/nrad per nm" : "pm/nrad per nm²");

/** A link to this page with one search parameter changed. */
function useHrefWith() {
  const pathname = usePathname();
  const search = useSearchParams();
  return (name: string, value: string) => {
    const next = new URLSearchParams(search.toString());
    next.set(name, value);
    return `${pathname}?${next.toString()}`;
  };
}

/** The chosen term's coefficient maps on both axes, and the picker of any term of the version. */
export function TermMaps({
  terms,
  chosen,
  name,
  degree,
  thetaNrad,
  mapX,
  mapY,
  version,
}: {
  terms: TermChoice[];
  chosen: string;
  name: string;
  degree: number;
  thetaNrad: number[];
  mapX: number[];
  mapY: number[];
  version: string;
}) {
  const router = useRouter();
  const hrefWith = useHrefWith();
  const [pending, startTransition] = useTransition();
  const pickerId = useId();
  const unit = coefficientUnit(degree);
  return (
    <div className="flex flex-col gap-2">
      <div className="flex flex-wrap items-center gap-2 text-sm">
        <label htmlFor={pickerId} className="text-muted">
          Term
        </label>
        <select
          id={pickerId}
          value={chosen}
          onChange={(event) => startTransition(() => router.push(hrefWith("term", event.target.value), { scroll: false }))}
          className="rounded border border-line bg-surface px-2 py-1 font-mono text-xs"
          data-testid="term-picker"
        >
          {KINDS.map((kind, degreeOfKind) => {
            const ofKind = terms.filter((t) => t.degree === degreeOfKind);
            return ofKind.length ? (
              <optgroup key={kind} label={`${kind} (${ofKind.length})`}>
                {ofKind.map((t) => (
                  <option key={t.key} value={t.key}>
                    {t.name}
                  </option>
                ))}
              </optgroup>
            ) : null;
          })}
        </select>
        <span className="text-xs text-muted" aria-live="polite">
          {pending ? "loading the maps…" : `${terms.length} terms; the maps are in ${unit}`}
        </span>
      </div>
      <div className={pending ? "opacity-60" : ""} data-testid="term-maps" data-term={chosen}>
        <HeatmapFigure
          title={`Coefficient maps of ${name}`}
          kind="signed"
          quantity={`coefficient of ${name}`}
          thetaNrad={thetaNrad}
          unit={unit}
          comments={[version, `term ${chosen} (${KINDS[degree]})`]}
          maps={[
            { label: "c_x", title: `${name} on c_x`, column: "coefficient_x", values: mapX, testId: "term-map-x" },
            { label: "c_y", title: `${name} on c_y`, column: "coefficient_y", values: mapY, testId: "term-map-y" },
          ]}
        />
      </div>
    </div>
  );
}

/** The significance ranking as a bar chart (linear terms marked) and a table of the leading terms. */
export function TermRanking({ ranking, budgetRmsNm, jitterNrad, version }: { ranking: RankedTerm[]; budgetRmsNm: number; jitterNrad: number; version: string }) {
  const router = useRouter();
  const hrefWith = useHrefWith();
  const shown = ranking.slice(0, 20);
  const linear = ranking.filter((r) => r.degree === 1).length;
  const products = ranking.filter((r) => r.degree === 2).length;
  return (
    <div className="flex flex-col gap-3">
      <p className="text-sm">
        For a wavefront within <span className="font-mono">{formatNumber(budgetRmsNm, 4)}</span> nm RMS every |a_i| is at most the budget
        r, so a term of degree k adds at most <span className="font-mono">max|C_t| r^k</span> of TTL anywhere on the map, and that times
        the jitter (<span className="font-mono">{formatNumber(jitterNrad, 4)}</span> nrad) of length noise. Click a bar to see its term&apos;s
        map.
      </p>
      <RankedBarChart
        title={`Largest possible length noise per term, ${formatNumber(budgetRmsNm, 4)} nm RMS and ${formatNumber(jitterNrad, 4)} nrad`}
        items={ranking.map((r) => ({ label: r.name, value: r.noiseBoundPm, group: KINDS[r.degree] }))}
        groups={[
          { key: "constant", label: "constant C", colour: "rgb(var(--sp-ink))" },
          { key: "linear", label: `linear A_i (${linear})`, colour: "rgb(var(--sp-accent))", marked: true },
          { key: "product", label: `products B_ij (${products})`, colour: "rgb(var(--sp-muted))", outline: true },
        ]}
        valueLabel="noise bound"
        unit="pm"
        rankLabel="rank (largest first)"
        comments={[version, `budget ${budgetRmsNm} nm RMS, jitter ${jitterNrad} nrad; ttl bound = max|C_t| r^degree, noise bound = ttl bound x jitter`]}
        extraColumns={{ columns: ["term", "degree", "max_abs_coefficient", "ttl_bound_pm_per_nrad"], rows: ranking.map((r) => [r.key, r.degree, r.maxAbsCoefficient, r.ttlBoundPmPerNrad]) }}
        onPick={(i) => router.push(hrefWith("term", ranking[i].key), { scroll: false })}
        width={760}
        testId="term-ranking"
      />
      <div className="overflow-x-auto">
        <table className="w-full border-collapse bg-surface font-mono text-xs" data-testid="ranking-table">
          <caption className="mb-1 text-left font-sans text-xs text-muted">
            The {shown.length} leading terms of {ranking.length} (every term is in the chart&apos;s CSV)
          </caption>
          <thead>
            <tr className="border-b border-line text-right font-sans text-xs text-muted">
              <th scope="col" className={thClass}>rank</th>
              <th scope="col" className={`${thClass} text-left`}>term</th>
              <th scope="col" className={`${thClass} text-left`}>kind</th>
              <th scope="col" className={thClass}>max |C_t|</th>
              <th scope="col" className={thClass}>TTL bound (pm/nrad)</th>
              <th scope="col" className={thClass}>noise bound (pm)</th>
            </tr>
          </thead>
          <tbody>
            {shown.map((r, i) => (
              <tr key={r.key} className="border-b border-line text-right last:border-0" data-term={r.key}>
                <td className={tdClass}>{i + 1}</td>
                <td className={`${tdClass} text-left`}>
                  <Link href={hrefWith("term", r.key)} scroll={false} className={linkClass}>
                    {r.name}
                  </Link>
                </td>
                <td className={`${tdClass} text-left font-sans`}>{KINDS[r.degree]}</td>
                <td className={tdClass}>
                  {formatNumber(r.maxAbsCoefficient, 3)} <span className="text-muted">{coefficientUnit(r.degree)}</span>
                </td>
                <td className={tdClass}>{formatNumber(r.ttlBoundPmPerNrad, 3)}</td>
                <td className={tdClass}>{formatNumber(r.noiseBoundPm, 3)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}
