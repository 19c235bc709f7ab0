// Evaluation and fit timings for bench:surrogate, run in a fresh process on model files written by
// bench/surrogate.ts, so that the garbage and background threads of training do not share the cores with the
// measurement. Each kernel is timed through the WebAssembly kernels and through the TypeScript reference.
// Usage: node --import tsx bench/surrogate_eval.ts FULL.stpm PRUNED.stpm  -> one JSON line.
import { readFileSync } from "node:fs";
import { availableParallelism } from "node:os";
import { setKernelsEnabled } from "../lib/kernels/instance.ts";
import { applyQTransposeInPlace, householderQr, solveUpperTriangular } from "../lib/linalg/index.ts";
import { createComputePool } from "../lib/parallel/index.ts";
import { fitCoefficients } from "../lib/surrogate/fit.ts";
import { compileTerms, decodeModel, evaluateBatch, evaluateInto, featureMatrix, randomDesign } from "../lib/surrogate/index.ts";

const [fullPath, prunedPath] = process.argv.slice(2);
const full = decodeModel(readFileSync(fullPath));
const pruned = decodeModel(readFileSync(prunedPath));
const J = full.nollIndices.length;

/** Median and best time of `calls` back-to-back calls, over `rounds` rounds after a warm-up. */
function perCallMs(rounds: number, calls: number, work: () => void): { median: number; best: number } {
  for (let i = 0; i < calls; i++) work();
  const times: number[] = [];
  for (let r = 0; r < rounds; r++) {
    const start = performance.now();
    for (let i = 0; i < calls; i++) work();
    times.push((performance.now() - start) / calls);
  }
  times.sort((a, b) => a - b);
  return { median: times[Math.floor(rounds / 2)], best: times[0] };
}

function bestMs(rounds: number, work: () => void): number {
  let best = Infinity;
  for (let r = 0; r < rounds; r++) {
    const start = performance.now();
    work();
    best = Math.min(best, performance.now() - start);
  }
  return best;
}

const one = randomDesign(J, { size: 1, maxRmsNm: 30, seed: 5 });
const out = new Float64Array(2 * full.pointsPerAxis * full.pointsPerAxis);
const fullMs = perCallMs(11, 1000, () => evaluateInto(full, one, out));
const prunedMs = perCallMs(11, 1000, () => evaluateInto(pruned, one, out));
setKernelsEnabled(false);
const fullReferenceMs = perCallMs(5, 300, () => evaluateInto(full, one, out));
setKernelsEnabled(true);

const BATCH = 6000;
const many = randomDesign(J, { size: BATCH, maxRmsNm: 30, seed: 6 });
evaluateBatch(full, many.subarray(0, 400 * J));
const oneThreadBest = bestMs(3, () => evaluateBatch(full, many));
setKernelsEnabled(false);
const REFERENCE_BATCH = 1000;
const referenceBest = bestMs(2, () => evaluateBatch(full, many.subarray(0, REFERENCE_BATCH * J)));
setKernelsEnabled(true);
const threads = availableParallelism();
const pool = createComputePool({ threads });
await pool.evaluateBatch(full, many.subarray(0, 400 * J)); // workers started and warm
let allBest = Infinity;
for (let r = 0; r < 7; r++) {
  const start = performance.now();
  await pool.evaluateBatch(full, many);
  allBest = Math.min(allBest, performance.now() - start);
}
await pool.close();

// The fit of the demo shape: 1300 random wavefronts (features of the full second-order model) and 1250 outputs.
// The maps are random numbers, as in bench/surrogate_numpy.py: the kernels' time does not depend on them.
const SAMPLES = 1300;
const nodes = full.pointsPerAxis * full.pointsPerAxis;
const compiled = compileTerms(full.terms, full.nollIndices);
const design = randomDesign(J, { size: SAMPLES, maxRmsNm: 35, seed: 7 });
let state = 12345;
const random = () => ((state = (state * 1103515245 + 12345) % 2147483648) / 2147483648) - 0.5;
const mapsX = Float64Array.from({ length: SAMPLES * nodes }, random);
const mapsY = Float64Array.from({ length: SAMPLES * nodes }, random);
const fit = () => fitCoefficients(compiled, full.terms, design, J, mapsX, mapsY, nodes);
fit();
const fitMs = bestMs(5, fit);
setKernelsEnabled(false);
const fitReferenceMs = bestMs(1, fit);
setKernelsEnabled(true);
// The least-squares kernels alone (what bench/surrogate_numpy.py times): QR, Q^T Y, back substitution.
const features = featureMatrix(compiled, design, J);
const rhs = new Float64Array(SAMPLES * 2 * nodes);
for (let s = 0; s < SAMPLES; s++) {
  rhs.set(mapsX.subarray(s * nodes, (s + 1) * nodes), s * 2 * nodes);
  rhs.set(mapsY.subarray(s * nodes, (s + 1) * nodes), s * 2 * nodes + nodes);
}
const leastSquares = () => {
  const qr = householderQr(features, SAMPLES, compiled.count);
  const y = rhs.slice();
  applyQTransposeInPlace(qr, y, 2 * nodes);
  solveUpperTriangular(qr, y, 2 * nodes);
};
const leastSquaresMs = bestMs(5, leastSquares);

console.log(JSON.stringify({
  fullMs, prunedMs, fullReferenceMs, threads,
  oneThreadMapsPerSecond: BATCH / (oneThreadBest / 1000),
  referenceOneThreadMapsPerSecond: REFERENCE_BATCH / (referenceBest / 1000),
  allThreadsMapsPerSecond: BATCH / (allBest / 1000),
  fitMs, fitReferenceMs, leastSquaresMs,
}));
