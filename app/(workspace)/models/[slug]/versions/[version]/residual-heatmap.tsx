"use client";

import { AxisBottom, AxisLeft, AxisRight } from "@visx/axis";
import { HeatmapRect } from "@visx/heatmap";
import { scaleLinear } from "@visx/scale";
import { useId, useState } from "react";
import { formatNumber } from "@/components/format";

/** Per-node residuals of a version on its validation set (ResidualStatistics.perNode), row-major [iy][ix]. */
export interface PerNodeResiduals {
  maxAbsErrorXPmPerNrad: number[];
  maxAbsErrorYPmPerNrad: number[];
  rmsErrorXPmPerNrad: number[];
  rmsErrorYPmPerNrad: number[];
}

type Statistic = "max" | "rms";

const STATISTICS: Record<Statistic, { label: string; x: keyof PerNodeResiduals; y: keyof PerNodeResiduals }> = {
  max: { label: "largest |error| over the validation set", x: "maxAbsErrorXPmPerNrad", y: "maxAbsErrorYPmPerNrad" },
  rms: { label: "RMS error over the validation set", x: "rmsErrorXPmPerNrad", y: "rmsErrorYPmPerNrad" },
};

// The product's own sequential ramp (dark slate to pale sand), legible on both the light and the dark surface.
const RAMP = ["#1c2640", "#1f5a72", "#3f8f7e", "#9cbc6a", "#ecd98c", "#fbf6e4"];

const PLOT = 240;
const MARGIN = { top: 8, left: 44, bottom: 36 };

interface Cell {
  count: number;
  ix: number;
  iy: number;
}

export function ResidualHeatmaps({ thetaNrad, perNode }: { thetaNrad: number[]; perNode: PerNodeResiduals }) {
  const [statistic, setStatistic] = useState<Statistic>("max");
  const selectId = useId();
  const chosen = STATISTICS[statistic];
  const maps = [
    { axis: "x", label: "c_x (TTL for tilt about x)", values: perNode[chosen.x] },
    { axis: "y", label: "c_y (TTL for tilt about y)", values: perNode[chosen.y] },
  ];
  const top = Math.max(...maps.flatMap((m) => m.values), 0) || 1;
  const colour = scaleLinear<string>({ domain: RAMP.map((_, i) => (top * i) / (RAMP.length - 1)), range: RAMP });

  return (
    <div className="flex flex-col gap-2" data-testid="residual-heatmap">
      <div className="flex items-center gap-2 text-sm">
        <label htmlFor={selectId} className="text-muted">
          Per node:
        </label>
        <select
          id={selectId}
          value={statistic}
          onChange={(event) => setStatistic(event.target.value as Statistic)}
          className="rounded border border-line bg-surface px-2 py-1"
        >
          <option value="max">largest |error|</option>
          <option value="rms">RMS error</option>
        </select>
        <span className="text-xs text-muted">of the surrogate against the exact maps, pm/nrad</span>
      </div>
      <div className="flex flex-wrap items-start gap-4">
        {maps.map((map) => (
          <NodeMap key={map.axis} title={map.label} statistic={chosen.label} thetaNrad={thetaNrad} values={map.values} colour={colour} />
        ))}
        <ColourBar top={top} />
      </div>
    </div>
  );
}

function NodeMap({
  title,
  statistic,
  thetaNrad,
  values,
  colour,
}: {
  title: string;
  statistic: string;
  thetaNrad: number[];
  values: number[];
  colour: (value: number) => string;
}) {
  const m = thetaNrad.length;
  const cell = PLOT / m;
  const h = thetaNrad[m - 1];
  const columns = Array.from({ length: m }, (_, ix) => ({
    bins: Array.from({ length: m }, (_, iy): Cell => ({ count: values[iy * m + ix], ix, iy })),
  }));
  let worst = 0;
  for (let i = 1; i < values.length; i++) if (values[i] > values[worst]) worst = i;
  const worstX = thetaNrad[worst % m];
  const worstY = thetaNrad[Math.floor(worst / m)];
  const description = `${title}, ${statistic}: largest ${formatNumber(values[worst], 3)} pm/nrad at θx ${formatNumber(worstX, 3)} nrad, θy ${formatNumber(worstY, 3)} nrad.`;
  const angle = scaleLinear<number>({ domain: [-h, h], range: [cell / 2, PLOT - cell / 2] });
  const angleUp = scaleLinear<number>({ domain: [-h, h], range: [PLOT - cell / 2, cell / 2] });
  return (
    <figure className="m-0">
      <figcaption className="mb-1 text-xs font-medium">{title}</figcaption>
      <svg
        width={PLOT + MARGIN.left + 8}
        height={PLOT + MARGIN.top + MARGIN.bottom}
        role="img"
        aria-label={description}
        className="text-muted"
      >
        {/* HeatmapRect leaves placement to its render function: the group places the cells. */}
        <g transform={`translate(${MARGIN.left}, ${MARGIN.top})`}>
        <HeatmapRect<{ bins: Cell[] }, Cell>
          data={columns}
          binWidth={cell}
          binHeight={cell}
          gap={0}
          xScale={(ix) => ix * cell}
          // Row iy = 0 is the most negative θy: draw it at the bottom.
          yScale={(iy) => (m - 1 - iy) * cell}
          bins={(column) => column.bins}
          count={(bin) => bin.count}
        >
          {(heatmap) =>
            heatmap.map((column) =>
              column.map((c) => (
                <rect key={`${c.row}-${c.column}`} x={c.x} y={c.y} width={c.width + 0.5} height={c.height + 0.5} fill={colour(c.count ?? 0)}>
                  <title>{`θx ${formatNumber(thetaNrad[c.column], 3)} nrad, θy ${formatNumber(thetaNrad[c.row], 3)} nrad: ${formatNumber(c.count ?? null, 3)} pm/nrad`}</title>
                </rect>
              )),
            )
          }
        </HeatmapRect>
        </g>
        <rect x={MARGIN.left} y={MARGIN.top} width={PLOT} height={PLOT} fill="none" stroke="currentColor" strokeOpacity={0.5} />
        <AxisBottom
          top={MARGIN.top + PLOT}
          left={MARGIN.left}
          scale={angle}
          numTicks={5}
          stroke="currentColor"
          tickStroke="currentColor"
          tickLabelProps={{ fill: "currentColor", fontSize: 10, textAnchor: "middle" }}
          label="θx (nrad)"
          labelProps={{ fill: "currentColor", fontSize: 10, textAnchor: "middle" }}
          labelOffset={6}
        />
        <AxisLeft
          top={MARGIN.top}
          left={MARGIN.left}
          scale={angleUp}
          numTicks={5}
          stroke="currentColor"
          tickStroke="currentColor"
          tickLabelProps={{ fill: "currentColor", fontSize: 10, textAnchor: "end", dx: -2, dy: 3 }}
          label="θy (nrad)"
          labelProps={{ fill: "currentColor", fontSize: 10, textAnchor: "middle" }}
          labelOffset={18}
        />
      </svg>
      <p className="mt-1 max-w-[18rem] text-xs text-muted">
        Largest <span className="font-mono text-ink">{formatNumber(values[worst], 3)}</span> pm/nrad at (
        <span className="font-mono">{formatNumber(worstX, 3)}</span>, <span className="font-mono">{formatNumber(worstY, 3)}</span>) nrad
      </p>
    </figure>
  );
}

function ColourBar({ top }: { top: number }) {
  const gradientId = useId().replace(/:/g, "");
  const height = PLOT;
  const scale = scaleLinear<number>({ domain: [0, top], range: [height, 0] });
  return (
    <figure className="m-0">
      <figcaption className="mb-1 text-xs font-medium">pm/nrad</figcaption>
      <svg width={72} height={height + MARGIN.top + MARGIN.bottom} role="img" aria-label={`Colour scale from 0 to ${formatNumber(top, 3)} pm/nrad`} className="text-muted">
        <defs>
          <linearGradient id={gradientId} x1="0" y1="1" x2="0" y2="0">
            {RAMP.map((c, i) => (
              <stop key={c} offset={`${(100 * i) / (RAMP.length - 1)}%`} stopColor={c} />
            ))}
          </linearGradient>
        </defs>
        <rect x={4} y={MARGIN.top} width={14} height={height} fill={`url(#${gradientId})`} stroke="currentColor" strokeOpacity={0.5} />
        <AxisRight
          top={MARGIN.top}
          left={18}
          scale={scale}
          numTicks={6}
          stroke="currentColor"
          tickStroke="currentColor"
          tickFormat={(v) => formatNumber(Number(v), 2)}
          tickLabelProps={{ fill: "currentColor", fontSize: 10, dx: 2, dy: 3 }}
        />
      </svg>
    </figure>
  );
}
