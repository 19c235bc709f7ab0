"use client";

import { AxisBottom, AxisLeft } from "@visx/axis";
import { Group } from "@visx/group";
import { scaleLinear } from "@visx/scale";
import { Bar } from "@visx/shape";
import { useMemo, type ReactNode } from "react";
import { formatNumber } from "@/components/format";
import { AXIS_STYLE, PlotFrame } from "./plot-frame";
import { histogramBins, type HistogramBin } from "./plot-data";
import { pointerIn, PlotTooltip, usePlotTooltip } from "./plot-tooltip";

const MARGIN = { top: 10, right: 14, bottom: 38, left: 48 };

/**
 * A histogram of values in equal-width bins (`histogramBins`: Sturges' rule unless `binCount` is given), with a
 * read-out of each bin's range and count; the CSV holds the bins.
 */
export function Histogram({
  title,
  values,
  binCount,
  xLabel,
  unit,
  countLabel = "count",
  surrogate = true,
  comments = [],
  width = 440,
  height = 220,
  testId,
  note,
}: {
  title: string;
  values: ArrayLike<number>;
  binCount?: number;
  xLabel: string;
  unit: string;
  countLabel?: string;
  surrogate?: boolean;
  comments?: readonly string[];
  width?: number;
  height?: number;
  testId?: string;
  note?: ReactNode;
}) {
  const bins = useMemo(() => histogramBins(values, { binCount }), [values, binCount]);
  const innerWidth = width - MARGIN.left - MARGIN.right;
  const innerHeight = height - MARGIN.top - MARGIN.bottom;
  const x = scaleLinear<number>({ domain: [bins[0].lo, bins[bins.length - 1].hi], range: [0, innerWidth] });
  const top = Math.max(1, ...bins.map((b) => b.count));
  const y = scaleLinear<number>({ domain: [0, top], range: [innerHeight, 0], nice: true });
  const tooltip = usePlotTooltip<{ bin: HistogramBin; index: number }>();
  const total = bins.reduce((s, b) => s + b.count, 0);
  const describe = ({ bin }: { bin: HistogramBin }) =>
    `${formatNumber(bin.lo, 3)} – ${formatNumber(bin.hi, 3)} ${unit}: ${bin.count} ${countLabel} (${formatNumber((100 * bin.count) / Math.max(total, 1), 3)} %)`;

  return (
    <PlotFrame
      title={title}
      surrogate={surrogate}
      testId={testId}
      note={note}
      readout={tooltip.data ? describe(tooltip.data) : `${total} ${countLabel} in ${bins.length} bins; point at a bar for its count.`}
      csv={() => ({
        comments: [title, `${xLabel}: equal-width bins, the last one closed`, ...comments],
        columns: [`bin_lo_${unit.replace(/\W+/g, "_")}`, `bin_hi_${unit.replace(/\W+/g, "_")}`, "count"],
        rows: bins.map((b) => [b.lo, b.hi, b.count]),
      })}
    >
      <svg width={width} height={height} data-plot="histogram" role="img" aria-label={`${title}: ${total} ${countLabel} from ${formatNumber(bins[0].lo, 3)} to ${formatNumber(bins[bins.length - 1].hi, 3)} ${unit}`} className="block text-muted" onPointerLeave={tooltip.hide}>
        <Group left={MARGIN.left} top={MARGIN.top}>
          {bins.map((bin, i) => (
            <Bar
              key={i}
              x={x(bin.lo) + 0.5}
              width={Math.max(0.5, x(bin.hi) - x(bin.lo) - 1)}
              y={y(bin.count)}
              height={innerHeight - y(bin.count)}
              fill={tooltip.data?.index === i ? "rgb(var(--sp-focus))" : "rgb(var(--sp-accent))"}
              data-bin={i}
            />
          ))}
          <rect
            width={innerWidth}
            height={innerHeight}
            fill="transparent"
            onPointerMove={(event) => {
              const at = pointerIn(event);
              if (!at) return;
              const value = x.invert(at.x - MARGIN.left);
              const index = bins.findIndex((b, i) => value >= b.lo && (value < b.hi || i === bins.length - 1));
              if (index < 0) tooltip.hide();
              else tooltip.show({ bin: bins[index], index }, at);
            }}
          />
          <AxisBottom top={innerHeight} scale={x} numTicks={6} {...AXIS_STYLE} tickLabelProps={{ ...AXIS_STYLE.tickLabelProps, textAnchor: "middle" }} label={`${xLabel} (${unit})`} labelOffset={8} />
          <AxisLeft scale={y} numTicks={5} {...AXIS_STYLE} tickLabelProps={{ ...AXIS_STYLE.tickLabelProps, textAnchor: "end", dx: -2, dy: 3 }} label={countLabel} labelOffset={24} />
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
