import { scaleLinear } from "@visx/scale";
import { SURROGATE_NOTICE } from "@/lib/surrogate/model";

/**
 * The data side of the plotting kit, free of React and the DOM: colour-scale domains and colours, histogram bins,
 * the node under a pointer, and the CSV text behind every plot. Client components and tests import it alike.
 */

/** A signed map (TTL, differences, coefficients) or a magnitude (|error|, RMS error), which decides the colour scale. */
export type MapKind = "signed" | "magnitude";

/** The product's own sequential ramp (dark slate to pale sand), for magnitudes from zero up. */
export const SEQUENTIAL_RAMP = ["#1c2640", "#1f5a72", "#3f8f7e", "#9cbc6a", "#ecd98c", "#fbf6e4"] as const;
/** The product's own diverging ramp: deep teal (negative) through pale stone (zero) to brick (positive). */
export const DIVERGING_RAMP = ["#0f4c5c", "#3e8a94", "#a9cfcf", "#efeee8", "#e9b58c", "#c2643b", "#7a2816"] as const;

export const rampOf = (kind: MapKind): readonly string[] => (kind === "signed" ? DIVERGING_RAMP : SEQUENTIAL_RAMP);

/** Largest |value| and the range of the defined values of some maps (nulls and non-finite values skipped). */
function extent(maps: readonly ArrayLike<number | null>[]): { lo: number; hi: number; top: number; any: boolean } {
  let lo = Infinity;
  let hi = -Infinity;
  for (const map of maps) {
    for (let i = 0; i < map.length; i++) {
      const v = map[i];
      if (v === null || !Number.isFinite(v)) continue;
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
  }
  const any = lo <= hi;
  return { lo: any ? lo : 0, hi: any ? hi : 0, top: any ? Math.max(Math.abs(lo), Math.abs(hi)) : 0, any };
}

/**
 * The colour bar's range for some maps drawn on one scale. Signed maps: `[-L, L]` with L the largest |value|, so
 * zero sits at the middle of the diverging ramp. Magnitudes: `[min(0, lowest), highest]`, zero at the dark end.
 * All-zero (or empty) maps get `[-1, 1]` / `[0, 1]` so the bar still has a length.
 */
export function colourDomain(kind: MapKind, ...maps: readonly ArrayLike<number | null>[]): [number, number] {
  const { lo, hi, top } = extent(maps);
  if (kind === "signed") {
    const limit = top > 0 ? top : 1;
    return [-limit, limit];
  }
  const bottom = Math.min(0, lo);
  return [bottom, hi > bottom ? hi : bottom + 1];
}

/** A colour function over `[lo, hi]` through evenly spaced stops of a ramp (values outside are clamped). */
export function rampScale(ramp: readonly string[], lo: number, hi: number): (value: number) => string {
  const span = hi > lo ? hi - lo : 1;
  return scaleLinear<string>({ domain: ramp.map((_, i) => lo + (span * i) / (ramp.length - 1)), range: [...ramp], clamp: true });
}

/** The node index of a pointer at `(px, py)` px inside a map of `m x m` cells drawn `size` px square, θy up. */
export function nodeAtPixel(m: number, size: number, px: number, py: number): { ix: number; iy: number } | null {
  if (!(px >= 0 && py >= 0 && px < size && py < size)) return null;
  const ix = Math.min(m - 1, Math.floor((px / size) * m));
  const row = Math.min(m - 1, Math.floor((py / size) * m));
  return { ix, iy: m - 1 - row };
}

/** The node of a map's largest value (by |value| for signed maps), or null when every value is undefined. */
export function peakNode(kind: MapKind, m: number, values: ArrayLike<number | null>): { ix: number; iy: number; value: number } | null {
  let best = -1;
  let bestScore = -Infinity;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (v === null || !Number.isFinite(v)) continue;
    const score = kind === "signed" ? Math.abs(v) : v;
    if (score > bestScore) {
      bestScore = score;
      best = i;
    }
  }
  return best < 0 ? null : { ix: best % m, iy: Math.floor(best / m), value: values[best] as number };
}

export interface HistogramBin {
  lo: number;
  hi: number;
  count: number;
}

/**
 * Equal-width bins over `[lo, hi]` (default: the data's range); the last bin includes its upper edge, values
 * outside the range are not counted. The default number of bins is Sturges' rule, `ceil(log2 n) + 1`.
 * Source: H. A. Sturges, "The choice of a class interval", J. Am. Stat. Assoc. 21, 65-66 (1926).
 * @throws {RangeError} "binCount must be a positive integer"
 */
export function histogramBins(values: ArrayLike<number>, options: { binCount?: number; lo?: number; hi?: number } = {}): HistogramBin[] {
  const finite: number[] = [];
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) finite.push(values[i]);
  const binCount = options.binCount ?? Math.max(1, Math.ceil(Math.log2(Math.max(finite.length, 1))) + 1);
  if (!Number.isInteger(binCount) || binCount < 1) throw new RangeError("binCount must be a positive integer");
  let lo = options.lo ?? Infinity;
  let hi = options.hi ?? -Infinity;
  if (options.lo === undefined || options.hi === undefined) {
    for (const v of finite) {
      if (options.lo === undefined && v < lo) lo = v;
      if (options.hi === undefined && v > hi) hi = v;
    }
  }
  if (!(lo <= hi)) {
    lo = 0;
    hi = 1;
  }
  if (hi === lo) hi = lo + 1;
  const width = (hi - lo) / binCount;
  const bins = Array.from({ length: binCount }, (_, b) => ({ lo: lo + b * width, hi: b === binCount - 1 ? hi : lo + (b + 1) * width, count: 0 }));
  for (const v of finite) {
    if (v < lo || v > hi) continue;
    bins[Math.min(binCount - 1, Math.floor((v - lo) / width))].count++;
  }
  return bins;
}

/** One CSV cell: numbers in JavaScript's shortest round-trip form (so a parsed cell equals the number exactly). */
function cell(value: string | number | null | undefined): string {
  if (value === null || value === undefined) return "";
  if (typeof value === "number") return Number.isFinite(value) ? String(value) : "";
  return /[",\r\n]/.test(value) || value.startsWith("#") ? `"${value.replaceAll('"', '""')}"` : value;
}

/**
 * The CSV text behind a plot (RFC 4180 fields and CRLF line ends): `# ` comment lines first (what the plot shows,
 * then the notice on surrogate results when the numbers come from a surrogate), then the header and the rows.
 */
export function toCsv(table: CsvTable): string {
  const lines = table.comments.map((c) => `# ${c.replace(/[\r\n]+/g, " ")}`);
  lines.push(table.columns.map(cell).join(","));
  for (const row of table.rows) lines.push(row.map(cell).join(","));
  return `${lines.join("\r\n")}\r\n`;
}

/** A file name for an export: lower case, words joined by hyphens. */
export function exportFileName(title: string, extension: "csv" | "png"): string {
  const stem = title
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, "-")
    .replace(/^-+|-+$/g, "");
  return `${stem || "plot"}.${extension}`;
}

export interface CsvTable {
  comments: readonly string[];
  columns: readonly string[];
  rows: readonly (readonly (string | number | null)[])[];
}

/** Rows of a table behind a map figure: one per node with ix, iy, θx, θy, then each map's value (row-major `[iy][ix]`). */
export function mapTable(
  comments: readonly string[],
  thetaNrad: readonly number[],
  maps: readonly { column: string; values: ArrayLike<number | null> }[],
): CsvTable {
  const m = thetaNrad.length;
  const rows: (number | null)[][] = [];
  for (let iy = 0; iy < m; iy++) {
    for (let ix = 0; ix < m; ix++) rows.push([ix, iy, thetaNrad[ix], thetaNrad[iy], ...maps.map((map) => map.values[iy * m + ix] ?? null)]);
  }
  return { comments, columns: ["ix", "iy", "theta_x_nrad", "theta_y_nrad", ...maps.map((map) => map.column)], rows };
}

/** The CSV a plot exports: its table, with the notice on surrogate results as the last comment line when `surrogate`. */
export function plotCsv(table: CsvTable, surrogate: boolean): string {
  return toCsv({ ...table, comments: surrogate ? [...table.comments, SURROGATE_NOTICE] : table.comments });
}

/**
 * Tick values of a log axis over `[lo, hi]` (both > 0): the powers of ten inside it when there are at least two;
 * otherwise 1, 2 and 5 times the powers of ten (at least two of them when the range allows), so labels never crowd.
 * Null for a range that is not positive and increasing.
 */
export function logTicks(lo: number, hi: number): number[] | null {
  if (!(lo > 0 && hi > lo)) return null;
  const inside = (mantissas: number[]) => {
    const ticks: number[] = [];
    for (let k = Math.floor(Math.log10(lo)) - 1; k <= Math.ceil(Math.log10(hi)); k++) {
      for (const m of mantissas) {
        const t = Number(`${m}e${k}`);
        if (t >= lo * (1 - 1e-12) && t <= hi * (1 + 1e-12)) ticks.push(t);
      }
    }
    return ticks;
  };
  for (const mantissas of [[1], [1, 2, 5], [1, 2, 3, 4, 5, 6, 7, 8, 9]]) {
    const ticks = inside(mantissas);
    if (ticks.length >= 2) return ticks;
  }
  return [lo, hi];
}

/** A map of a figure as data: its short label (read-out), heading, CSV column and row-major `[iy][ix]` values. */
export interface MapSeries {
  label: string;
  title: string;
  column?: string;
  values: ArrayLike<number | null>;
}

/** The table a heatmap figure exports: what it shows, then one row per node with each map's value. */
export function heatmapTable(title: string, unit: string, thetaNrad: readonly number[], maps: readonly MapSeries[], comments: readonly string[] = []): CsvTable {
  return mapTable(
    [title, `values in ${unit}; ix and iy index θx and θy of the far-field grid (nrad)`, ...comments],
    thetaNrad,
    maps.map((map) => ({ column: map.column ?? map.label, values: map.values })),
  );
}

/** Centre of cell `i` of `samples` across the unit disc's bounding square, in units of the pupil radius R. */
export const pupilCellCentre = (i: number, samples: number): number => (2 * i + 1) / samples - 1;

/**
 * The table a pupil picture exports: what it shows, then one row per cell with ix, iy, x/R, y/R of the cell centre
 * and each map's value (empty outside the aperture). Maps are `samples x samples`, row-major `[iy][ix]`, y up.
 */
export function pupilTable(title: string, unit: string, samples: number, maps: readonly MapSeries[], comments: readonly string[] = []): CsvTable {
  const rows: (number | null)[][] = [];
  for (let iy = 0; iy < samples; iy++) {
    for (let ix = 0; ix < samples; ix++) {
      rows.push([ix, iy, pupilCellCentre(ix, samples), pupilCellCentre(iy, samples), ...maps.map((map) => map.values[iy * samples + ix] ?? null)]);
    }
  }
  return {
    comments: [title, `values in ${unit} at the centres of ${samples} x ${samples} cells over the aperture; x/R and y/R in units of the pupil radius; empty outside the aperture`, ...comments],
    columns: ["ix", "iy", "x_over_r", "y_over_r", ...maps.map((map) => map.column ?? map.label)],
    rows,
  };
}
