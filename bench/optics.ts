// npm run bench:optics: exact TTL maps for the demo setup (128 x 128 pupil, 25 x 25 nodes, Noll 4-36),
// on one thread (through the WebAssembly kernels and through the TypeScript reference) and on all threads,
// beside the same computation in NumPy, with the ratio against the kernel issue's target.
import { availableParallelism } from "node:os";
import { VELORA_SETUP, VELORA_ZERNIKE } from "../lib/demo/velora.ts";
import { setKernelsEnabled } from "../lib/kernels/instance.ts";
import { TtlPropagator } from "../lib/optics/index.ts";
import { propagateMany } from "../lib/parallel/index.ts";
import { randomDesign } from "../lib/surrogate/designs.ts";
import { runNumpyScript } from "./numpy.ts";

const SETUP = VELORA_SETUP;
const TERMS = VELORA_ZERNIKE.indices;
const J = TERMS.length;

function bestOf<T>(repeats: number, work: () => T): number {
  let best = Number.POSITIVE_INFINITY;
  for (let r = 0; r < repeats; r++) {
    const start = performance.now();
    work();
    best = Math.min(best, performance.now() - start);
  }
  return best;
}

const fmt = (v: number, digits = 3) => v.toFixed(digits);

let start = performance.now();
const propagator = new TtlPropagator(SETUP, TERMS);
const setupMs = performance.now() - start;

const singleMaps = 400;
const wavefronts = randomDesign(J, { size: singleMaps, maxRmsNm: 30, seed: 1 });
const x = new Float64Array(propagator.nodeCount), y = new Float64Array(propagator.nodeCount);
const sweep = () => {
  for (let s = 0; s < singleMaps; s++) propagator.ttlInto(wavefronts.subarray(s * J, (s + 1) * J), x, y);
};
sweep(); // warm-up: let the JIT optimise the hot loops
const singleMs = bestOf(7, sweep) / singleMaps;
setKernelsEnabled(false);
sweep();
const referenceMs = bestOf(3, sweep) / singleMaps;
setKernelsEnabled(true);

const threads = availableParallelism();
const manyMaps = 3000;
const many = randomDesign(J, { size: manyMaps, maxRmsNm: 30, seed: 2 });
const tiny = many.subarray(0, J * threads);
// Wall-clock figures on a shared machine vary from minute to minute: take the best of three runs each.
let parallelTotalMs = Number.POSITIVE_INFINITY;
let startupMs = Number.POSITIVE_INFINITY;
for (let round = 0; round < 3; round++) {
  start = performance.now();
  await propagateMany(SETUP, TERMS, tiny, { threads });
  startupMs = Math.min(startupMs, performance.now() - start);
  start = performance.now();
  await propagateMany(SETUP, TERMS, many, { threads });
  parallelTotalMs = Math.min(parallelTotalMs, performance.now() - start);
}
const parallelMs = (parallelTotalMs - startupMs) / manyMaps;

console.log("bench:optics — exact TTL maps, demo setup (128 x 128 pupil, 25 x 25 nodes, Noll 4-36, 30 nm RMS)");
console.log(`  per-setup precompute          ${fmt(setupMs, 1)} ms`);
console.log(`  one thread                    ${fmt(singleMs)} ms/map   (target <= 3 ms); TypeScript reference ${fmt(referenceMs)} ms/map`);
console.log(`  ${threads} threads, ${manyMaps} maps          ${fmt(parallelTotalMs / manyMaps)} ms/map with worker start-up (${fmt(startupMs, 0)} ms)`);
console.log(`  ${threads} threads, steady state       ${fmt(parallelMs)} ms/map   speed-up ${fmt(singleMs / parallelMs, 2)} x (target ~2 x)`);

// One thread against one thread: OpenBLAS pinned to a single thread (on a shared machine its own threads fall
// far behind whenever the other core is busy).
const numpy = runNumpyScript("optics_numpy.py", ["300"], { OPENBLAS_NUM_THREADS: "1" });
if (numpy.result) {
  const numpyMs = numpy.result.msPerMap;
  console.log(`  NumPy (plain matrix products, OpenBLAS on one thread) ${fmt(numpyMs)} ms/map`);
  const ratio = singleMs / numpyMs;
  console.log(`  ratio one thread / NumPy      ${fmt(ratio, 2)} x   target <= 1.5 x: ${ratio <= 1.5 ? "met" : "NOT met"} (TypeScript reference ${fmt(referenceMs / numpyMs, 2)} x)`);
} else {
  console.log(`  NumPy comparison skipped: ${numpy.reason}`);
}
