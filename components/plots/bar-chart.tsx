"use client";

import { AxisBottom, AxisLeft } from "@visx/axis";
import { Group } from "@visx/group";
import { scaleLinear, scaleLog } from "@visx/scale";
import { useMemo, type ReactNode } from "react";
import { formatNumber } from "@/components/format";
import { AXIS_STYLE, PlotFrame } from "./plot-frame";
import { PlotLegend } from "./plot-legend";
import { logTicks, type CsvTable } from "./plot-data";
import { pointerIn, PlotTooltip, usePlotTooltip } from "./plot-tooltip";

const MARGIN = { top: 12, right: 16, bottom: 52, left: 60 };

export interface RankedItem {
  label: string;
  value: number;
  /** Key of its group in `groups`. */
  group: string;
}

export interface BarGroup {
  key: string;
  label: string;
  colour: string;
  /** Groups marked with a triangle under the axis at each of their bars (so they stand apart without colour). */
  marked?: boolean;
  /** Bars drawn as outlines instead of filled. */
  outline?: boolean;
}

/**
 * A ranked bar chart: one bar per item in the given order (largest first), on a log or linear value axis. The
 * bars of each group are one SVG path, so hundreds of bars stay light; hovering reads out the bar under the pointer.
 */
export function RankedBarChart({
  title,
  items,
  groups,
  valueLabel,
  unit,
  rankLabel = "rank",
  log = true,
  surrogate = true,
  comments = [],
  extraColumns,
  onPick,
  width = 640,
  height = 280,
  testId,
  note,
}: {
  title: string;
  items: readonly RankedItem[];
  groups: readonly BarGroup[];
  valueLabel: string;
  unit: string;
  rankLabel?: string;
  log?: boolean;
  surrogate?: boolean;
  comments?: readonly string[];
  /** More CSV columns per item (same order as `items`). */
  extraColumns?: { columns: string[]; rows: (string | number | null)[][] };
  /** Called with the index of a clicked bar. */
  onPick?: (index: number) => void;
  width?: number;
  height?: number;
  testId?: string;
  note?: ReactNode;
}) {
  const innerWidth = width - MARGIN.left - MARGIN.right;
  const innerHeight = height - MARGIN.top - MARGIN.bottom;
  const n = items.length;
  const step = innerWidth / Math.max(n, 1);
  const positive = items.map((i) => i.value).filter((v) => v > 0);
  const top = Math.max(...positive, 0) || 1;
  const bottom = log ? Math.max(Math.min(...positive, top) / 2, top * 1e-9) : 0;
  const value = useMemo(
    () =>
      log
        ? scaleLog<number>({ domain: [bottom, top * 1.5], range: [innerHeight, 0], clamp: true })
        : scaleLinear<number>({ domain: [0, top * 1.05], range: [innerHeight, 0], nice: true }),
    [log, bottom, top, innerHeight],
  );
  const rank = scaleLinear<number>({ domain: [0.5, n + 0.5], range: [0, innerWidth] });
  const paths = useMemo(
    () =>
      groups.map((g) =>
        items
          .map((item, i) => (item.group === g.key ? `M${i * step + step * 0.1},${innerHeight}V${value(Math.max(item.value, bottom))}h${Math.max(step * 0.8, 0.6)}V${innerHeight}Z` : ""))
          .join(""),
      ),
    [groups, items, step, innerHeight, value, bottom],
  );
  const tooltip = usePlotTooltip<number>();
  const groupOf = (key: string) => groups.find((g) => g.key === key);
  const describe = (i: number) => `#${i + 1} ${items[i].label} (${groupOf(items[i].group)?.label ?? items[i].group}): ${formatNumber(items[i].value, 4)} ${unit}`;
  const csv = (): CsvTable => ({
    comments: [title, `${valueLabel} in ${unit}, largest first`, ...comments],
    columns: ["rank", "label", "group", valueLabel.replace(/\W+/g, "_").toLowerCase(), ...(extraColumns?.columns ?? [])],
    rows: items.map((item, i) => [i + 1, item.label, item.group, item.value, ...(extraColumns?.rows[i] ?? [])]),
  });

  return (
    <PlotFrame title={title} surrogate={surrogate} csv={csv} testId={testId} note={note} readout={tooltip.data !== null ? describe(tooltip.data) : `${n} bars; point at one for its numbers.`}>
      <svg width={width} height={height} data-plot="ranked" data-bars={n} role="img" aria-label={`${title}: ${n} bars${n ? `, largest ${items[0].label} ${formatNumber(items[0].value, 3)} ${unit}` : ""}`} className="block text-muted" onPointerLeave={tooltip.hide}>
        <Group left={MARGIN.left} top={MARGIN.top}>
          {groups.map((g, k) => (
            <path key={g.key} d={paths[k]} fill={g.outline ? "none" : g.colour} stroke={g.outline ? g.colour : "none"} strokeWidth={0.8} data-group={g.key} />
          ))}
          {items.map((item, i) =>
            groupOf(item.group)?.marked ? (
              <path key={i} d={`M${(i + 0.5) * step},${innerHeight + 3} l3,6 h-6 Z`} fill={groupOf(item.group)!.colour} data-mark={item.label} />
            ) : null,
          )}
          {tooltip.data !== null && (
            <rect x={tooltip.data * step} y={0} width={Math.max(step, 2)} height={innerHeight} fill="rgb(var(--sp-focus))" fillOpacity={0.25} pointerEvents="none" />
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
              const i = Math.floor((at.x - MARGIN.left) / step);
              if (i < 0 || i >= n) tooltip.hide();
              else tooltip.show(i, at);
            }}
            onClick={() => tooltip.data !== null && onPick?.(tooltip.data)}
            cursor={onPick ? "pointer" : undefined}
          />
          <AxisBottom top={innerHeight + 10} scale={rank} numTicks={Math.min(10, n)} {...AXIS_STYLE} tickFormat={(v) => String(v)} tickLabelProps={{ ...AXIS_STYLE.tickLabelProps, textAnchor: "middle" }} label={rankLabel} labelOffset={8} />
          <AxisLeft scale={value} numTicks={log ? 6 : 5} tickValues={log ? (logTicks(bottom, top * 1.5) ?? undefined) : undefined} {...AXIS_STYLE} tickFormat={(v) => formatNumber(Number(v), 2)} tickLabelProps={{ ...AXIS_STYLE.tickLabelProps, textAnchor: "end", dx: -2, dy: 3 }} label={`${valueLabel} (${unit})`} labelOffset={34} />
          <PlotLegend
            entries={groups.map((g) => ({ label: `${g.label}${g.marked ? " (▲ under the axis)" : ""}`, glyph: g.outline ? "hatched" : "bar", colour: g.colour }))}
            left={innerWidth - 220}
            top={6}
          />
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

