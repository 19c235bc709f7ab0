// npm run bench:analysis [-- MODEL.stpm]: the analyses of a version on one thread, best of several rounds: the exact
// worst case on the WFE ball (one eigen-decomposition per node and axis, both signs), the per-node simple bound of a
// pruning, the coupling modes (SVD of the stacked linear maps), the requirement limits and a correction, with NumPy
// doing the same linear algebra beside them (numpy.linalg.eigh on the same stack of B matrices, numpy.linalg.svd of
// the same L). Without a model file it trains the demo version 2 spec first (about 15 s). It asserts nothing.
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { VELORA_SETUP, VELORA_ZERNIKE } from "../lib/demo/velora.ts";
import { writeNpy } from "../lib/formats/npy.ts";
import { propagateMany } from "../lib/parallel/index.ts";
import {
  correctWavefront, couplingModes, decodeModel, droppedBound, linearMapMatrix, outputQuadratic, quadraticAt, randomDesign, requirementLimits,
  termSignificance, trainSurrogate, worstCase, type SurrogateModel,
} from "../lib/surrogate/index.ts";
import { runNumpyScript } from "./numpy.ts";

const ROUNDS = 3;
const best = (run: () => unknown) => {
  let bestMs = Infinity;
  for (let r = 0; r < ROUNDS; r++) {
    const began = performance.now();
    run();
    bestMs = Math.min(bestMs, performance.now() - began);
  }
  return bestMs;
};

let model: SurrogateModel;
const path = process.argv[2];
if (path) model = decodeModel(readFileSync(path));
else {
  const trained = await trainSurrogate(
    {
      setup: VELORA_SETUP, zernike: VELORA_ZERNIKE, order: 2, generatingSet: { design: "random", size: 1300, maxRmsNm: 35, seed: 7 },
      validationSet: { size: 200, maxRmsNm: 35, seed: 8 }, softwareVersion: "bench", createdAt: new Date().toISOString(),
    },
    (noll, coefficientsNm, onProgress) => propagateMany(VELORA_SETUP, noll, coefficientsNm, { onProgress }),
  );
  model = trained.model;
}
const J = model.nollIndices.length;
const P = 2 * model.pointsPerAxis ** 2;
console.log(`model: ${model.terms.length} terms, J = ${J}, ${P} outputs (${model.pointsPerAxis}^2 nodes x 2 axes)`);

let worst = worstCase(model, 30);
const worstMs = best(() => (worst = worstCase(model, 30)));
const ranking = termSignificance(model, { budgetRmsNm: 30, jitterNrad: 8 });
const keep = new Set(ranking.filter((e) => e.degree === 0 || e.noiseBoundPm >= 0.1).map((e) => e.label));
const mask = model.terms.map((t) => !keep.has(t.length === 0 ? "1" : t.map((j) => `Z${j}`).join("*")));
let bound = droppedBound(model, mask, { budgetRmsNm: 30, jitterNrad: 8 });
const boundMs = best(() => (bound = droppedBound(model, mask, { budgetRmsNm: 30, jitterNrad: 8 })));
const sumOfMaxima = ranking.filter((e) => !keep.has(e.label)).reduce((s, e) => s + e.ttlBoundPmPerNrad, 0);
const modesMs = best(() => couplingModes(model));
const requirementsMs = best(() => requirementLimits(model, 0.1, 30));
const wavefront = randomDesign(J, { size: 1, maxRmsNm: 20, seed: 3 });
const correctionMs = best(() => correctWavefront(model, wavefront, [0, 1, 2, 7], 20));

// The same linear algebra in NumPy: the stack of B (P x J x J) and L (P x J).
const dir = mkdtempSync(join(tmpdir(), "stillpoint-bench-analysis-"));
const stack = new Float64Array(P * J * J);
const form = outputQuadratic(J);
for (let p = 0; p < P; p++) stack.set(quadraticAt(model, p, form).quadratic, p * J * J);
writeFileSync(join(dir, "b.npy"), writeNpy("<f8", [P, J, J], stack));
writeFileSync(join(dir, "l.npy"), writeNpy("<f8", [P, J], linearMapMatrix(model)));
const numpy = runNumpyScript("analysis_numpy.py", [dir], { OPENBLAS_NUM_THREADS: "1" });
rmSync(dir, { recursive: true, force: true });

const ratio = (ours: number, theirs: number | undefined) => (theirs ? `${(ours / theirs).toFixed(2)} x NumPy` : "no NumPy");
console.log(`exact worst case, r = 30 nm:   ${worstMs.toFixed(0)} ms (${P} eigen-decompositions + 2 ${P} trust-region solves; ${worst.hardCases} hard cases); worst ${worst.worstValue.toPrecision(5)} pm/nrad, peak simple bound ${Math.max(...worst.bound).toPrecision(5)}`);
console.log(`  NumPy eigh of the same stack: ${numpy.result ? `${numpy.result.eighMs.toFixed(0)} ms` : numpy.reason} -> ${ratio(worstMs, numpy.result?.eighMs)} (ours includes the solves)`);
console.log(`pruning bound (0.1 pm threshold): ${boundMs.toFixed(0)} ms; dropped terms bounded by ${bound.ttl.toPrecision(4)} pm/nrad per node (sum of per-term maxima ${sumOfMaxima.toPrecision(4)} pm/nrad)`);
console.log(`coupling modes (SVD ${P} x ${J}): ${modesMs.toFixed(0)} ms; NumPy svd ${numpy.result ? `${numpy.result.svdMs.toFixed(1)} ms` : numpy.reason} -> ${ratio(modesMs, numpy.result?.svdMs)}`);
console.log(`requirement limits:             ${requirementsMs.toFixed(0)} ms`);
console.log(`correction (4 adjustable terms): ${correctionMs.toFixed(0)} ms`);
