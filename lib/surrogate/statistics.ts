import { sampleRmsNm, type SampleSet } from "./designs.ts";

export interface ErrorSummary {
  samples: number;
  /** Largest |exact TTL| over the samples, nodes and both axes, pm/nrad. */
  peakAbsTtlPmPerNrad: number;
  /** Largest |predicted - exact|, pm/nrad. */
  maxAbsErrorPmPerNrad: number;
  /** RMS of (predicted - exact) over samples, nodes and both axes, pm/nrad. */
  rmsErrorPmPerNrad: number;
  /** maxAbsError / peakAbsTtl (0 when the peak is 0). */
  maxErrorRelativeToPeak: number;
  /** Worst over samples of (max |error| in the sample / peak |exact TTL| of that sample). */
  worstSampleRelativeError: number;
}

export interface RmsBinSummary extends ErrorSummary {
  loNm: number;
  hiNm: number;
}

export interface ResidualStatistics {
  overall: ErrorSummary;
  /** Bins of total RMS wavefront error, equal width from 0 to the largest RMS in the set. */
  perRmsBin: RmsBinSummary[];
  /** Per node (row-major `[iy][ix]`): max and RMS error of each axis over the samples, pm/nrad. */
  perNode: {
    maxAbsErrorXPmPerNrad: number[];
    maxAbsErrorYPmPerNrad: number[];
    rmsErrorXPmPerNrad: number[];
    rmsErrorYPmPerNrad: number[];
  };
  /**
   * Per validation sample, in the set's order: its total RMS wavefront error (nm) and its largest |error| over the
   * nodes and both axes (pm/nrad). Absent from statistics computed before it was recorded.
   */
  perSample?: {
    rmsNm: number[];
    maxAbsErrorPmPerNrad: number[];
  };
}

/**
 * Residual statistics of predicted maps against the exact maps of a sample set: overall, per total-RMS bin
 * per node and per sample. Errors are `predicted - exact` in pm/nrad; relative figures divide by the largest |exact TTL|
 * of the set (or bin, or sample).
 *
 * @param predicted flat maps in the layout of the set: `x[s * M^2 + node]`, pm/nrad
 * @param binCount number of equal-width RMS bins (>= 1)
 * @throws {RangeError} "predicted maps must match the sample set" / "binCount must be a positive integer"
 * Source: PHYSICS.md section 5 (residual statistics).
 */
export function residualStatistics(
  set: SampleSet,
  termCountJ: number,
  predicted: { x: Float64Array; y: Float64Array },
  binCount = 5,
): ResidualStatistics {
  const nodes = set.pointsPerAxis * set.pointsPerAxis;
  if (predicted.x.length !== set.x.length || predicted.y.length !== set.y.length) {
    throw new RangeError("predicted maps must match the sample set");
  }
  if (!Number.isInteger(binCount) || binCount < 1) throw new RangeError("binCount must be a positive integer");
  const rms = sampleRmsNm(set.coefficientsNm, termCountJ);
  const topNm = rms.reduce((m, v) => Math.max(m, v), 0);
  const binWidth = topNm > 0 ? topNm / binCount : 1;
  const binOf = (r: number) => Math.min(binCount - 1, Math.floor(r / binWidth));

  const accumulators = Array.from({ length: binCount + 1 }, () => ({
    samples: 0,
    peak: 0,
    maxError: 0,
    squares: 0,
    values: 0,
    worstRelative: 0,
  }));
  const maxX = new Float64Array(nodes);
  const maxY = new Float64Array(nodes);
  const sqX = new Float64Array(nodes);
  const sqY = new Float64Array(nodes);
  const sampleMaxima = new Float64Array(set.count);
  for (let s = 0; s < set.count; s++) {
    let samplePeak = 0;
    let sampleMax = 0;
    let sampleSquares = 0;
    const base = s * nodes;
    for (let n = 0; n < nodes; n++) {
      const ex = set.x[base + n];
      const ey = set.y[base + n];
      const dx = predicted.x[base + n] - ex;
      const dy = predicted.y[base + n] - ey;
      samplePeak = Math.max(samplePeak, Math.abs(ex), Math.abs(ey));
      const adx = Math.abs(dx);
      const ady = Math.abs(dy);
      sampleMax = Math.max(sampleMax, adx, ady);
      sampleSquares += dx * dx + dy * dy;
      if (adx > maxX[n]) maxX[n] = adx;
      if (ady > maxY[n]) maxY[n] = ady;
      sqX[n] += dx * dx;
      sqY[n] += dy * dy;
    }
    sampleMaxima[s] = sampleMax;
    const relative = samplePeak > 0 ? sampleMax / samplePeak : sampleMax > 0 ? Infinity : 0;
    for (const acc of [accumulators[binCount], accumulators[binOf(rms[s])]]) {
      acc.samples++;
      acc.peak = Math.max(acc.peak, samplePeak);
      acc.maxError = Math.max(acc.maxError, sampleMax);
      acc.squares += sampleSquares;
      acc.values += 2 * nodes;
      acc.worstRelative = Math.max(acc.worstRelative, relative);
    }
  }
  const summary = (acc: (typeof accumulators)[number]): ErrorSummary => ({
    samples: acc.samples,
    peakAbsTtlPmPerNrad: acc.peak,
    maxAbsErrorPmPerNrad: acc.maxError,
    rmsErrorPmPerNrad: acc.values > 0 ? Math.sqrt(acc.squares / acc.values) : 0,
    maxErrorRelativeToPeak: acc.peak > 0 ? acc.maxError / acc.peak : 0,
    worstSampleRelativeError: acc.worstRelative,
  });
  return {
    overall: summary(accumulators[binCount]),
    perRmsBin: accumulators.slice(0, binCount).map((acc, b) => ({
      loNm: b * binWidth,
      hiNm: b === binCount - 1 ? Math.max(topNm, binWidth) : (b + 1) * binWidth,
      ...summary(acc),
    })),
    perNode: {
      maxAbsErrorXPmPerNrad: Array.from(maxX),
      maxAbsErrorYPmPerNrad: Array.from(maxY),
      rmsErrorXPmPerNrad: Array.from(sqX, (v) => Math.sqrt(v / set.count)),
      rmsErrorYPmPerNrad: Array.from(sqY, (v) => Math.sqrt(v / set.count)),
    },
    perSample: { rmsNm: Array.from(rms), maxAbsErrorPmPerNrad: Array.from(sampleMaxima) },
  };
}
