"use client";

import { AxisBottom, AxisLeft } from "@visx/axis";
import { Group } from "@visx/group";
import { scaleLinear } from "@visx/scale";
import { useEffect, useMemo, useRef, useState, type ReactNode } from "react";
import { formatNumber } from "@/components/format";
import { rasterDataUrl, themeColour } from "./export";
import { AXIS_STYLE, PlotFrame, useColourScheme } from "./plot-frame";
import { DASH, PlotLegend, type LegendEntry } from "./plot-legend";
import type { CsvTable } from "./plot-data";
import { pointerIn, PlotTooltip, usePlotTooltip } from "./plot-tooltip";

const MARGIN = { top: 12, right: 16, bottom: 40, left: 56 };
/** Hover picks the nearest point within this many px. */
const PICK_PX = 10;

export interface StepOverlay {
  /** Bands `[lo, hi)` of the x axis and a value over each, drawn as a step line. */
  steps: readonly { lo: number; hi: number; value: number }[];
  label: string;
}

export interface LimitOverlay {
  /** A vertical line at this x, e.g. the validity limit. */
  x: number;
  label: string;
}

/**
 * A scatter plot of many points (10,000 and more): the points are drawn on a canvas into one image, so the page
 * holds one element for them, not one per point; axes, overlays and legend are SVG. Hovering picks the nearest point
 * (a plain scan: 10,000 distances take well under a millisecond) and shows its numbers.
 */
export function ScatterPlot({
  title,
  x,
  y,
  xLabel,
  yLabel,
  xColumn,
  yColumn,
  pointName = (i) => `point ${i + 1}`,
  pointLabel = "points",
  stepOverlay,
  limits = [],
  xDomain,
  yDomain,
  surrogate = true,
  comments = [],
  width = 560,
  height = 300,
  testId,
  note,
}: {
  title: string;
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  xLabel: string;
  yLabel: string;
  xColumn: string;
  yColumn: string;
  pointName?: (index: number) => string;
  /** What a point is, for the legend ("validation wavefronts"). */
  pointLabel?: string;
  stepOverlay?: StepOverlay;
  limits?: readonly LimitOverlay[];
  xDomain?: [number, number];
  yDomain?: [number, number];
  surrogate?: boolean;
  comments?: readonly string[];
  width?: number;
  height?: number;
  testId?: string;
  note?: ReactNode;
}) {
  const scheme = useColourScheme();
  const innerWidth = width - MARGIN.left - MARGIN.right;
  const innerHeight = height - MARGIN.top - MARGIN.bottom;
  const count = Math.min(x.length, y.length);
  const [xLo, xHi] = useMemo(() => {
    if (xDomain) return xDomain;
    let hi = 0;
    for (let i = 0; i < count; i++) hi = Math.max(hi, x[i]);
    for (const l of limits) hi = Math.max(hi, l.x);
    for (const s of stepOverlay?.steps ?? []) hi = Math.max(hi, s.hi);
    return [0, hi > 0 ? hi * 1.04 : 1];
  }, [xDomain, x, count, limits, stepOverlay]);
  const [yLo, yHi] = useMemo(() => {
    if (yDomain) return yDomain;
    let hi = 0;
    for (let i = 0; i < count; i++) hi = Math.max(hi, y[i]);
    for (const s of stepOverlay?.steps ?? []) hi = Math.max(hi, s.value);
    return [0, hi > 0 ? hi * 1.08 : 1];
  }, [yDomain, y, count, stepOverlay]);
  const xScale = useMemo(() => scaleLinear<number>({ domain: [xLo, xHi], range: [0, innerWidth] }), [xLo, xHi, innerWidth]);
  const yScale = useMemo(() => scaleLinear<number>({ domain: [yLo, yHi], range: [innerHeight, 0] }), [yLo, yHi, innerHeight]);

  const [href, setHref] = useState("");
  useEffect(() => {
    const ratio = 2;
    setHref(
      rasterDataUrl(innerWidth * ratio, innerHeight * ratio, (context) => {
        context.scale(ratio, ratio);
        context.fillStyle = themeColour("accent", count > 2000 ? 0.45 : 0.8);
        const r = count > 2000 ? 1.6 : 2.6;
        context.beginPath();
        for (let i = 0; i < count; i++) {
          const px = xScale(x[i]);
          const py = yScale(y[i]);
          context.moveTo(px + r, py);
          context.arc(px, py, r, 0, 2 * Math.PI);
        }
        context.fill();
      }),
    );
  }, [x, y, count, xScale, yScale, innerWidth, innerHeight, scheme]);

  const tooltip = usePlotTooltip<number>();
  const frame = useRef(0);
  const describe = (i: number) => `${pointName(i)}: ${xLabel} ${formatNumber(x[i], 4)}, ${yLabel} ${formatNumber(y[i], 4)}`;
  const stepPath = stepOverlay?.steps.map((s, i) => `${i === 0 ? "M" : "L"}${xScale(s.lo)},${yScale(s.value)} H${xScale(s.hi)}`).join(" ");
  const legend: LegendEntry[] = [
    { label: `${pointLabel} (${count})`, glyph: "dot", colour: "rgb(var(--sp-accent))" },
    ...(stepOverlay ? [{ label: stepOverlay.label, glyph: "line" as const, colour: "rgb(var(--sp-ink))" }] : []),
    ...limits.map((l) => ({ label: l.label, glyph: "dash" as const, colour: "rgb(var(--sp-caution))" })),
  ];
  const csv = (): CsvTable => ({
    comments: [
      title,
      ...comments,
      ...(stepOverlay ? [`${stepOverlay.label}: ${stepOverlay.steps.map((s) => `[${s.lo}, ${s.hi}) ${s.value}`).join("; ")}`] : []),
      ...limits.map((l) => `${l.label}: ${l.x}`),
    ],
    columns: ["index", xColumn, yColumn],
    rows: Array.from({ length: count }, (_, i) => [i, x[i], y[i]]),
  });

  return (
    <PlotFrame title={title} surrogate={surrogate} csv={csv} testId={testId} note={note} readout={tooltip.data !== null ? describe(tooltip.data) : `${count} ${pointLabel}; point at one for its numbers.`}>
      <svg width={width} height={height} data-plot="scatter" data-points={count} role="img" aria-label={`${title}: ${count} ${pointLabel}`} className="block text-muted" onPointerLeave={tooltip.hide}>
        <Group left={MARGIN.left} top={MARGIN.top}>
          {href && <image href={href} width={innerWidth} height={innerHeight} preserveAspectRatio="none" data-raster="" />}
          {stepPath && <path d={stepPath} fill="none" stroke="rgb(var(--sp-ink))" strokeWidth={1.75} data-overlay="steps" />}
          {limits.map((l) => (
            <line key={l.label} x1={xScale(l.x)} x2={xScale(l.x)} y1={0} y2={innerHeight} stroke="rgb(var(--sp-caution))" strokeWidth={1.5} strokeDasharray={DASH.dash} data-overlay="limit" />
          ))}
          {tooltip.data !== null && (
            <circle cx={xScale(x[tooltip.data])} cy={yScale(y[tooltip.data])} r={5} fill="none" stroke="rgb(var(--sp-focus))" strokeWidth={2} pointerEvents="none" />
          )}
          <rect
            width={innerWidth}
            height={innerHeight}
            fill="transparent"
            stroke="currentColor"
            strokeOpacity={0.3}
            onPointerMove={(event) => {
              const at = pointerIn(event);
              if (!at) return;
              cancelAnimationFrame(frame.current);
              frame.current = requestAnimationFrame(() => {
                const px = at.x - MARGIN.left;
                const py = at.y - MARGIN.top;
                let best = -1;
                let bestDistance = PICK_PX * PICK_PX;
                for (let i = 0; i < count; i++) {
                  const dx = xScale(x[i]) - px;
                  const dy = yScale(y[i]) - py;
                  const d = dx * dx + dy * dy;
                  if (d <= bestDistance) {
                    bestDistance = d;
                    best = i;
                  }
                }
                if (best < 0) tooltip.hide();
                else tooltip.show(best, at);
              });
            }}
          />
          <AxisBottom top={innerHeight} scale={xScale} numTicks={7} {...AXIS_STYLE} tickLabelProps={{ ...AXIS_STYLE.tickLabelProps, textAnchor: "middle" }} label={xLabel} labelOffset={8} />
          <AxisLeft scale={yScale} numTicks={5} {...AXIS_STYLE} tickLabelProps={{ ...AXIS_STYLE.tickLabelProps, textAnchor: "end", dx: -2, dy: 3 }} label={yLabel} labelOffset={30} />
          <PlotLegend entries={legend} left={10} top={6} />
        </Group>
      </svg>
      {tooltip.data !== null && (
        <PlotTooltip left={tooltip.left} top={tooltip.top}>
          {describe(tooltip.data)}
        </PlotTooltip>
      )}
    </PlotFrame>
  );
}
