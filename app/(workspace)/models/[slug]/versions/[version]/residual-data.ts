import { heatmapTable, type CsvTable, type MapSeries } from "@/components/plots/plot-data";
import type { ResidualStatistics } from "@/lib/surrogate/statistics";

/**
 * What the version page's residual plots show, as data (shared by the plots and the tests of their exports): the
 * per-node maps of the validation error, the node-error histogram and the per-sample points.
 */

export type PerNodeResiduals = ResidualStatistics["perNode"];
export type NodeStatistic = "max" | "rms";

export const RESIDUAL_UNIT = "pm/nrad";

const FIGURES: Record<NodeStatistic, { title: string; quantity: string; x: keyof PerNodeResiduals; y: keyof PerNodeResiduals; stem: string }> = {
  max: {
    title: "Largest |error| per node over the validation set",
    quantity: "largest |surrogate − exact| over the validation set",
    x: "maxAbsErrorXPmPerNrad",
    y: "maxAbsErrorYPmPerNrad",
    stem: "max_abs_error",
  },
  rms: {
    title: "RMS error per node over the validation set",
    quantity: "RMS of surrogate − exact over the validation set",
    x: "rmsErrorXPmPerNrad",
    y: "rmsErrorYPmPerNrad",
    stem: "rms_error",
  },
};

/** The two maps (c_x and c_y) of one per-node statistic, with their title and CSV columns. */
export function residualFigure(statistic: NodeStatistic, perNode: PerNodeResiduals): { title: string; quantity: string; maps: MapSeries[] } {
  const f = FIGURES[statistic];
  return {
    title: f.title,
    quantity: f.quantity,
    maps: [
      { label: "c_x", title: "c_x (TTL for tilt about x)", column: `${f.stem}_x_pm_per_nrad`, values: perNode[f.x] },
      { label: "c_y", title: "c_y (TTL for tilt about y)", column: `${f.stem}_y_pm_per_nrad`, values: perNode[f.y] },
    ],
  };
}

/** The table behind a residual map figure, as its CSV export holds it (before the notice). */
export function residualMapTable(statistic: NodeStatistic, thetaNrad: readonly number[], perNode: PerNodeResiduals, version: string): CsvTable {
  const figure = residualFigure(statistic, perNode);
  return heatmapTable(figure.title, RESIDUAL_UNIT, thetaNrad, figure.maps, [version]);
}

/** Every node's value of a statistic, both axes (the histogram's values). */
export function nodeErrors(statistic: NodeStatistic, perNode: PerNodeResiduals): number[] {
  const f = FIGURES[statistic];
  return [...perNode[f.x], ...perNode[f.y]];
}

/**
 * How a model's error grows with the total wavefront error, band by band (the non-empty RMS bins): the largest
 * |error| and the largest |exact TTL| of each band, their ratio, and how many times the last band's largest error
 * is the first one's.
 */
export function errorGrowth(perRmsBin: ResidualStatistics["perRmsBin"]): {
  bands: { loNm: number; hiNm: number; maxAbsErrorPmPerNrad: number; peakAbsTtlPmPerNrad: number; relative: number; samples: number }[];
  factor: number | null;
} {
  const bands = perRmsBin
    .filter((b) => b.samples > 0)
    .map((b) => ({ loNm: b.loNm, hiNm: b.hiNm, maxAbsErrorPmPerNrad: b.maxAbsErrorPmPerNrad, peakAbsTtlPmPerNrad: b.peakAbsTtlPmPerNrad, relative: b.maxErrorRelativeToPeak, samples: b.samples }));
  const first = bands[0]?.maxAbsErrorPmPerNrad ?? 0;
  const last = bands[bands.length - 1]?.maxAbsErrorPmPerNrad ?? 0;
  return { bands, factor: first > 0 ? last / first : null };
}
