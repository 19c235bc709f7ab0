"use client";

import { formatNumber } from "@/components/format";
import { HeatmapFigure } from "@/components/plots/heatmap";
import { Histogram } from "@/components/plots/histogram";
import { LineChart } from "@/components/plots/line-chart";
import { ScatterPlot } from "@/components/plots/scatter";
import type { ResidualStatistics } from "@/lib/surrogate/statistics";
import { errorGrowth, nodeErrors, RESIDUAL_UNIT, residualFigure, type NodeStatistic } from "./residual-data";

function FirstOrderGrowth({ growth }: { growth: ReturnType<typeof errorGrowth> }) {
  const first = growth.bands[0];
  const last = growth.bands[growth.bands.length - 1];
  const band = (b: typeof first) => `${formatNumber(b.loNm, 3)}–${formatNumber(b.hiNm, 3)} nm RMS`;
  return (
    <div className="rounded border border-caution px-3 py-2 text-sm" data-testid="first-order-growth">
      <p className="font-medium text-caution">First order: the error grows with mixed wavefronts</p>
      <p className="mt-1">
        This version has no product terms: what pairs of Zernike terms add to the TTL stays in its error, and that part grows
        with the square of the total wavefront error. On the validation set its largest error grows from{" "}
        <span className="font-mono">{formatNumber(first.maxAbsErrorPmPerNrad, 3)}</span> pm/nrad at {band(first)} to{" "}
        <span className="font-mono">{formatNumber(last.maxAbsErrorPmPerNrad, 3)}</span> pm/nrad at {band(last)}
        {growth.factor !== null && (
          <>
            , <span className="font-mono font-medium" data-testid="growth-factor">{formatNumber(growth.factor, 3)}</span> times as much
          </>
        )}
        . Use it only where the wavefronts stay small; a second-order version keeps the products.
      </p>
      <table className="mt-2 border-collapse font-mono text-xs" data-testid="growth-table">
        <caption className="sr-only">Largest error per band of total WFE, absolute and relative to the band&apos;s peak |TTL|</caption>
        <thead>
          <tr className="text-left font-sans text-muted">
            <th scope="col" className="pr-4 font-normal">band</th>
            <th scope="col" className="pr-4 text-right font-normal">max |error| (pm/nrad)</th>
            <th scope="col" className="pr-4 text-right font-normal">peak |TTL| (pm/nrad)</th>
            <th scope="col" className="pr-4 text-right font-normal">error / peak</th>
            <th scope="col" className="text-right font-normal">× first band</th>
          </tr>
        </thead>
        <tbody>
          {growth.bands.map((b) => (
            <tr key={b.loNm}>
              <th scope="row" className="pr-4 text-left font-normal">{band(b)}</th>
              <td className="pr-4 text-right">{formatNumber(b.maxAbsErrorPmPerNrad, 3)}</td>
              <td className="pr-4 text-right">{formatNumber(b.peakAbsTtlPmPerNrad, 3)}</td>
              <td className="pr-4 text-right">{formatNumber(b.relative * 100, 3)} %</td>
              <td className="text-right">{first.maxAbsErrorPmPerNrad > 0 ? formatNumber(b.maxAbsErrorPmPerNrad / first.maxAbsErrorPmPerNrad, 3) : "–"}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

function ResidualMaps({ statistic, thetaNrad, statistics, version, testId }: { statistic: NodeStatistic; thetaNrad: number[]; statistics: ResidualStatistics; version: string; testId: string }) {
  const figure = residualFigure(statistic, statistics.perNode);
  return (
    <HeatmapFigure
      title={figure.title}
      quantity={figure.quantity}
      kind="magnitude"
      thetaNrad={thetaNrad}
      maps={figure.maps}
      unit={RESIDUAL_UNIT}
      comments={[version]}
      testId={testId}
    />
  );
}

/**
 * The version page's residual plots: per-node maps of the largest and the RMS validation error on both axes, the
 * histogram of the node errors, the error of each validation wavefront against its total RMS with the per-band
 * worst case and the validity limit, and the per-band figures on log-log axes (with a call-out for first order).
 */
export function ResidualPlots({
  thetaNrad,
  statistics,
  validityLimitNm,
  order,
  version,
}: {
  thetaNrad: number[];
  statistics: ResidualStatistics;
  validityLimitNm: number;
  order: 1 | 2;
  version: string;
}) {
  const samples = statistics.perSample;
  const growth = errorGrowth(statistics.perRmsBin);
  const bands = statistics.perRmsBin.filter((b) => b.samples > 0);
  return (
    <div className="flex flex-col gap-5">
      {order === 1 && growth.bands.length > 1 && (
        <FirstOrderGrowth growth={growth} />
      )}
      <div className="flex flex-wrap gap-6">
        <ResidualMaps statistic="max" thetaNrad={thetaNrad} statistics={statistics} version={version} testId="residual-heatmap" />
        <ResidualMaps statistic="rms" thetaNrad={thetaNrad} statistics={statistics} version={version} testId="residual-rms-heatmap" />
      </div>
      <div className="flex flex-wrap items-start gap-6">
        {samples ? (
          <ScatterPlot
            title="Largest |error| of each validation wavefront against its total WFE"
            x={samples.rmsNm}
            y={samples.maxAbsErrorPmPerNrad}
            xLabel="total WFE (nm RMS)"
            yLabel={`largest |error| (${RESIDUAL_UNIT})`}
            xColumn="total_wfe_rms_nm"
            yColumn="max_abs_error_pm_per_nrad"
            pointName={(i) => `validation wavefront ${i + 1}`}
            pointLabel="validation wavefronts"
            stepOverlay={{ label: "worst per RMS band", steps: bands.map((b) => ({ lo: b.loNm, hi: b.hiNm, value: b.maxAbsErrorPmPerNrad })) }}
            limits={[{ x: validityLimitNm, label: `validity limit ${formatNumber(validityLimitNm, 3)} nm` }]}
            comments={[version]}
            testId="error-vs-wfe"
          />
        ) : (
          <p className="max-w-md rounded border border-line px-3 py-2 text-sm text-muted" data-testid="no-sample-points">
            The error of each validation wavefront was not recorded for this version (its statistics were computed before the
            product kept them), so there is no error-against-WFE scatter. The per-band worst errors are in the table below and
            in the band chart.
          </p>
        )}
        <Histogram
          title="Largest |error| per node, both axes"
          values={nodeErrors("max", statistics.perNode)}
          xLabel="largest |error| at a node"
          unit={RESIDUAL_UNIT}
          countLabel="nodes"
          comments={[version, "c_x and c_y nodes together"]}
          testId="node-error-histogram"
        />
        <LineChart
          title="Worst error and peak |TTL| per RMS band"
          xLabel="band centre, total WFE (nm RMS)"
          yLabel={RESIDUAL_UNIT}
          series={[
            { label: "largest |error|", column: "max_abs_error_pm_per_nrad", glyph: "dot", colour: "rgb(var(--sp-accent))", x: bands.map((b) => (b.loNm + b.hiNm) / 2), y: bands.map((b) => b.maxAbsErrorPmPerNrad) },
            { label: "RMS error", column: "rms_error_pm_per_nrad", glyph: "dash", colour: "rgb(var(--sp-good))", x: bands.map((b) => (b.loNm + b.hiNm) / 2), y: bands.map((b) => b.rmsErrorPmPerNrad) },
            { label: "peak |exact TTL|", column: "peak_abs_ttl_pm_per_nrad", glyph: "square", colour: "rgb(var(--sp-ink))", x: bands.map((b) => (b.loNm + b.hiNm) / 2), y: bands.map((b) => b.peakAbsTtlPmPerNrad) },
          ]}
          comments={[version, "x: the centre of each band of total RMS WFE"]}
          width={440}
          height={260}
          testId="band-chart"
        />
      </div>
    </div>
  );
}
