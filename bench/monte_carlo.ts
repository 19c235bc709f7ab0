// Monte Carlo timing for bench:surrogate: N random wavefronts inside a WFE budget evaluated on a (pruned) model
// file, the per-wavefront peak |TTL| (largest |c_x| or |c_y| over all nodes) kept, on T threads (the calling one and
// T - 1 workers, each with its own kernel instance, evaluating its own seeded share in chunks). Work skipped: only
// the pruned terms are evaluated, and only each wavefront's peak leaves the kernels (evaluateBatchPeaksInto), never
// its maps.
// Usage: node --import tsx bench/monte_carlo.ts MODEL.stpm N THREADS BUDGET_NM  -> one JSON line.
import { readFileSync } from "node:fs";
import { isMainThread, parentPort, Worker, workerData } from "node:worker_threads";
import { evaluateBatchPeaksInto } from "../lib/surrogate/evaluate.ts";
import { decodeModel, randomDesign } from "../lib/surrogate/index.ts";

interface Share {
  path: string;
  first: number;
  count: number;
  budgetNm: number;
}

interface ShareResult {
  worstPeak: number;
  sumPeak: number;
  count: number;
  ms: number;
}

const CHUNK = 1024;

function runShare({ path, first, count, budgetNm }: Share): ShareResult {
  const start = performance.now();
  const model = decodeModel(readFileSync(path));
  const J = model.nollIndices.length;
  const peaks = new Float64Array(CHUNK);
  let worstPeak = 0;
  let sumPeak = 0;
  for (let done = 0; done < count; done += CHUNK) {
    const rows = Math.min(CHUNK, count - done);
    // One seed per chunk of the whole run: the samples do not depend on how the run is shared.
    const wavefronts = randomDesign(J, { size: rows, maxRmsNm: budgetNm, seed: 1_000_003 + (first + done) / CHUNK });
    const chunkPeaks = peaks.subarray(0, rows);
    evaluateBatchPeaksInto(model, wavefronts, chunkPeaks);
    for (let s = 0; s < rows; s++) {
      sumPeak += chunkPeaks[s];
      if (chunkPeaks[s] > worstPeak) worstPeak = chunkPeaks[s];
    }
  }
  return { worstPeak, sumPeak, count, ms: performance.now() - start };
}

if (!isMainThread) {
  parentPort!.postMessage(runShare(workerData as Share));
} else {
  const [path, nText, threadsText, budgetText] = process.argv.slice(2);
  const total = Number(nText);
  const threads = Number(threadsText);
  const budgetNm = Number(budgetText);
  // Shares are whole chunks so that every chunk seed is used once.
  const chunks = Math.ceil(total / CHUNK);
  const perThread = Math.ceil(chunks / threads) * CHUNK;
  const start = performance.now();
  const workers: Promise<ShareResult>[] = [];
  for (let t = 1; t < threads; t++) {
    const first = t * perThread;
    const count = Math.max(0, Math.min(perThread, total - first));
    workers.push(
      new Promise((resolve, reject) => {
        const worker = new Worker(new URL("./monte_carlo_worker.mjs", import.meta.url), { workerData: { path, first, count, budgetNm } satisfies Share });
        worker.once("message", resolve);
        worker.once("error", reject);
      }),
    );
  }
  const mine = runShare({ path, first: 0, count: Math.min(perThread, total), budgetNm });
  const results = [mine, ...(await Promise.all(workers))];
  const wallMs = performance.now() - start;
  const samples = results.reduce((s, r) => s + r.count, 0);
  console.log(JSON.stringify({
    samples,
    threads,
    wallSeconds: wallMs / 1000,
    worstPeakPmPerNrad: Math.max(...results.map((r) => r.worstPeak)),
    meanPeakPmPerNrad: results.reduce((s, r) => s + r.sumPeak, 0) / samples,
    terms: decodeModel(readFileSync(path)).terms.length,
  }));
}
