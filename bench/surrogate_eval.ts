// Evaluation timings for bench:surrogate, run in a fresh process on model files written by bench/surrogate.ts,
// so that the garbage and background threads of training do not share the cores with the measurement.
// Usage: node --import tsx bench/surrogate_eval.ts FULL.stpm PRUNED.stpm  -> one JSON line.
import { readFileSync } from "node:fs";
import { availableParallelism } from "node:os";
import { createComputePool } from "../lib/parallel/index.ts";
import { decodeModel, evaluateBatch, evaluateInto, randomDesign } from "../lib/surrogate/index.ts";

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

const one = randomDesign(J, { size: 1, maxRmsNm: 30, seed: 5 });
const out = new Float64Array(2 * full.pointsPerAxis * full.pointsPerAxis);
const fullMs = perCallMs(11, 1000, () => evaluateInto(full, one, out));
const prunedMs = perCallMs(11, 1000, () => evaluateInto(pruned, one, out));

const BATCH = 6000;
const many = randomDesign(J, { size: BATCH, maxRmsNm: 30, seed: 6 });
evaluateBatch(full, many.subarray(0, 400 * J));
let oneThreadBest = Infinity;
for (let r = 0; r < 3; r++) {
  const start = performance.now();
  evaluateBatch(full, many);
  oneThreadBest = Math.min(oneThreadBest, performance.now() - start);
}
const threads = availableParallelism();
const pool = createComputePool({ threads });
await pool.evaluateBatch(full, many.subarray(0, 400 * J)); // workers started and warm
let allBest = Infinity;
for (let r = 0; r < 5; r++) {
  const start = performance.now();
  await pool.evaluateBatch(full, many);
  allBest = Math.min(allBest, performance.now() - start);
}
await pool.close();
console.log(JSON.stringify({
  fullMs, prunedMs, threads,
  oneThreadMapsPerSecond: BATCH / (oneThreadBest / 1000),
  allThreadsMapsPerSecond: BATCH / (allBest / 1000),
}));
