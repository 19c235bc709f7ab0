"use client";

import { AxisBottom, AxisLeft } from "@visx/axis";
import { Group } from "@visx/group";
import { scaleLinear, scaleLog } from "@visx/scale";
import { LinePath } from "@visx/shape";
import { useMemo, type ReactNode } from "react";
import { formatNumber } from "@/components/format";
import { AXIS_STYLE, PlotFrame } from "./plot-frame";
import { DASH, GlyphMark, PlotLegend, type Glyph } from "./plot-legend";
import { logTicks, type CsvTable } from "./plot-data";
import { pointerIn, PlotTooltip, usePlotTooltip } from "./plot-tooltip";

const MARGIN = { top: 12, right: 16, bottom: 40, left: 60 };

export interface LineSeries {
  label: string;
  /** CSV column stem for this series. */
  column: string;
  x: readonly number[];
  y: readonly number[];
  /** `line`, `dash` or `dots`: the stroke tells series apart without colour; `dot`/`square` add a marker per point. */
  glyph: Glyph;
  colour: string;
}

type AxisKind = "log" | "linear";

/** The range of the positive (log) or finite (linear) values, padded a little. */
function domainOf(values: number[], kind: AxisKind): [number, number] {
  const usable = values.filter((v) => Number.isFinite(v) && (kind === "linear" || v > 0));
  if (usable.length === 0) return kind === "log" ? [1, 10] : [0, 1];
  let lo = Math.min(...usable);
  let hi = Math.max(...usable);
  if (kind === "log") {
    if (hi === lo) [lo, hi] = [lo / 2, hi * 2];
    return [lo / 1.2, hi * 1.2];
  }
  if (hi === lo) [lo, hi] = [lo - 1, hi + 1];
  return [Math.min(0, lo), hi + 0.05 * (hi - lo)];
}

/**
 * Lines over a shared x axis, log-log by default (amplitude spectral densities against frequency, errors against
 * amplitude). Hovering reads out every series at the nearest x; non-positive values on a log axis are left out of
 * the line and kept in the CSV.
 */
export function LineChart({
  title,
  series,
  xLabel,
  yLabel,
  xAxis = "log",
  yAxis = "log",
  surrogate = true,
  comments = [],
  width = 560,
  height = 300,
  testId,
  note,
}: {
  title: string;
  series: readonly LineSeries[];
  xLabel: string;
  yLabel: string;
  xAxis?: AxisKind;
  yAxis?: AxisKind;
  surrogate?: boolean;
  comments?: readonly string[];
  width?: number;
  height?: number;
  testId?: string;
  note?: ReactNode;
}) {
  const innerWidth = width - MARGIN.left - MARGIN.right;
  const innerHeight = height - MARGIN.top - MARGIN.bottom;
  const xDomain = useMemo(() => domainOf(series.flatMap((s) => [...s.x]), xAxis), [series, xAxis]);
  const yDomain = useMemo(() => domainOf(series.flatMap((s) => [...s.y]), yAxis), [series, yAxis]);
  const xScale = xAxis === "log" ? scaleLog<number>({ domain: xDomain, range: [0, innerWidth] }) : scaleLinear<number>({ domain: xDomain, range: [0, innerWidth] });
  const yScale = yAxis === "log" ? scaleLog<number>({ domain: yDomain, range: [innerHeight, 0] }) : scaleLinear<number>({ domain: yDomain, range: [innerHeight, 0] });
  const drawable = (v: number, kind: AxisKind) => Number.isFinite(v) && (kind === "linear" || v > 0);
  const tooltip = usePlotTooltip<{ x: number; values: { label: string; x: number; y: number }[] }>();
  const tick = (v: unknown) => formatNumber(Number(v), 2);
  const ticksOf = (domain: [number, number], kind: AxisKind) => (kind === "log" ? (logTicks(domain[0], domain[1]) ?? undefined) : undefined);
  const describe = (d: { x: number; values: { label: string; x: number; y: number }[] }) =>
    `${xLabel} ${formatNumber(d.x, 4)}: ${d.values.map((v) => `${v.label} ${formatNumber(v.y, 4)}`).join(", ")}`;
  const csv = (): CsvTable => ({
    comments: [title, `${xLabel}; ${yLabel}`, ...comments],
    columns: ["series", "x", "y"],
    rows: series.flatMap((s) => s.x.map((x, i) => [s.column, x, s.y[i]])),
  });

  return (
    <PlotFrame title={title} surrogate={surrogate} csv={csv} testId={testId} note={note} readout={tooltip.data ? describe(tooltip.data) : "Point at the plot for the values at an x."}>
      <svg width={width} height={height} data-plot="lines" role="img" aria-label={`${title}: ${series.map((s) => s.label).join(", ")}`} className="block text-muted" onPointerLeave={tooltip.hide}>
        <Group left={MARGIN.left} top={MARGIN.top}>
          {series.map((s) => {
            const points = s.x.map((x, i) => [x, s.y[i]] as const).filter(([x, y]) => drawable(x, xAxis) && drawable(y, yAxis));
            return (
              <Group key={s.column} data-series={s.column}>
                <LinePath data={points} x={(p) => xScale(p[0])} y={(p) => yScale(p[1])} stroke={s.colour} strokeWidth={1.75} strokeDasharray={DASH[s.glyph]} fill="none" />
                {(s.glyph === "dot" || s.glyph === "square" || s.glyph === "triangle") &&
                  points.map(([x, y], i) => (
                    <Group key={i} left={xScale(x) - 8} top={yScale(y) - 5}>
                      <GlyphMark glyph={s.glyph} colour={s.colour} />
                    </Group>
                  ))}
              </Group>
            );
          })}
          {tooltip.data && <line x1={xScale(tooltip.data.x)} x2={xScale(tooltip.data.x)} y1={0} y2={innerHeight} stroke="rgb(var(--sp-focus))" pointerEvents="none" />}
          <rect
            width={innerWidth}
            height={innerHeight}
            fill="transparent"
            stroke="currentColor"
            strokeOpacity={0.3}
            onPointerMove={(event) => {
              const at = pointerIn(event);
              if (!at) return;
              const px = at.x - MARGIN.left;
              const values = series.flatMap((s) => {
                let best = -1;
                let bestDistance = Infinity;
                s.x.forEach((x, i) => {
                  if (!drawable(x, xAxis)) return;
                  const d = Math.abs(xScale(x) - px);
                  if (d < bestDistance) [best, bestDistance] = [i, d];
                });
                return best < 0 ? [] : [{ label: s.label, x: s.x[best], y: s.y[best] }];
              });
              if (values.length === 0) tooltip.hide();
              else tooltip.show({ x: values[0].x, values }, at);
            }}
          />
          <AxisBottom top={innerHeight} scale={xScale} tickValues={ticksOf(xDomain, xAxis)} numTicks={6} {...AXIS_STYLE} tickFormat={tick} tickLabelProps={{ ...AXIS_STYLE.tickLabelProps, textAnchor: "middle" }} label={xLabel} labelOffset={8} />
          <AxisLeft scale={yScale} tickValues={ticksOf(yDomain, yAxis)} numTicks={5} {...AXIS_STYLE} tickFormat={tick} tickLabelProps={{ ...AXIS_STYLE.tickLabelProps, textAnchor: "end", dx: -2, dy: 3 }} label={yLabel} labelOffset={34} />
          <PlotLegend entries={series.map((s) => ({ label: s.label, glyph: s.glyph, colour: s.colour }))} left={10} top={6} />
        </Group>
      </svg>
      {tooltip.data && (
        <PlotTooltip left={tooltip.left} top={tooltip.top}>
          {describe(tooltip.data)}
        </PlotTooltip>
      )}
    </PlotFrame>
  );
}
