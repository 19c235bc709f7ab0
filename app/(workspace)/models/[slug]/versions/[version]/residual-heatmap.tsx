"use client";

import { useId, useState } from "react";
import { formatNumber } from "@/components/format";
import { ColourBar, NodeHeatmap, rampScale, SEQUENTIAL_RAMP } from "@/components/node-heatmap";

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

export function ResidualHeatmaps({ thetaNrad, perNode }: { thetaNrad: number[]; perNode: PerNodeResiduals }) {
  const [statistic, setStatistic] = useState<Statistic>("max");
  const selectId = useId();
  const chosen = STATISTICS[statistic];
  const maps = [
    { axis: "x", label: "c_x (TTL for tilt about x)", values: perNode[chosen.x] },
    { axis: "y", label: "c_y (TTL for tilt about y)", values: perNode[chosen.y] },
  ];
  const top = Math.max(...maps.flatMap((m) => m.values), 0) || 1;
  const colour = rampScale(SEQUENTIAL_RAMP, 0, top);

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
        <ColourBar lo={0} hi={top} ramp={SEQUENTIAL_RAMP} unit="pm/nrad" />
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
  let worst = 0;
  for (let i = 1; i < values.length; i++) if (values[i] > values[worst]) worst = i;
  const worstX = thetaNrad[worst % m];
  const worstY = thetaNrad[Math.floor(worst / m)];
  const description = `${title}, ${statistic}: largest ${formatNumber(values[worst], 3)} pm/nrad at θx ${formatNumber(worstX, 3)} nrad, θy ${formatNumber(worstY, 3)} nrad.`;
  return (
    <div>
      <NodeHeatmap title={title} description={description} thetaNrad={thetaNrad} values={values} colour={colour} unit="pm/nrad" />
      <p className="mt-1 max-w-[18rem] text-xs text-muted">
        Largest <span className="font-mono text-ink">{formatNumber(values[worst], 3)}</span> pm/nrad at (
        <span className="font-mono">{formatNumber(worstX, 3)}</span>, <span className="font-mono">{formatNumber(worstY, 3)}</span>) nrad
      </p>
    </div>
  );
}
