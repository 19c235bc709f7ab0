import { appendRunLog, completeRun, loadRun, loadRunChunks, storeRunChunk, type RunRecord } from "../db/runs.ts";
import type { ModelRecord } from "../db/models.ts";
import { loadSampleSet } from "../db/generatingSets.ts";
import { insertVersion, loadSurrogateById } from "../db/versions.ts";
import { nollToAnsi } from "../optics/zernike.ts";
import type { SampleSet } from "../surrogate/designs.ts";
import { evaluateBatchPeaksInto } from "../surrogate/evaluate.ts";
import { SURROGATE_NOTICE, type SurrogateModel } from "../surrogate/model.ts";
import { coefficientsSha256, encodeModel } from "../surrogate/modelFile.ts";
import { addMonteCarloPeaks, emptyMonteCarlo, mergeMonteCarlo, MONTE_CARLO_CHUNK, monteCarloSamples, type MonteCarloSummary } from "../surrogate/requirements.ts";
import { prunedVersionModel } from "../registry/pruning.ts";
import { isUploaded, type ChunkJob, type MonteCarloRunSpec, type PruningRunSpec } from "./plan.ts";

/** Peak |TTL| of many wavefronts (row-major S x J), pm/nrad: on a compute pool, or here. */
export type PeakEvaluator = (model: SurrogateModel, coefficientsNm: Float64Array) => Promise<Float64Array>;

/** On the calling thread, yielding once per call so that the worker's lock renewals get through. */
export const peaksHere: PeakEvaluator = async (model, coefficientsNm) => {
  const peaks = new Float64Array(coefficientsNm.length / model.nollIndices.length);
  evaluateBatchPeaksInto(model, coefficientsNm, peaks);
  await new Promise((resolve) => setImmediate(resolve));
  return peaks;
};

/** Decoded versions a worker keeps (a Monte Carlo run reads its version in every chunk). */
const versions = new Map<number, Promise<SurrogateModel>>();
export function versionModel(versionId: number): Promise<SurrogateModel> {
  let hit = versions.get(versionId);
  if (!hit) {
    if (versions.size >= 4) versions.delete(versions.keys().next().value!);
    hit = loadSurrogateById(versionId);
    hit.catch(() => versions.delete(versionId));
    versions.set(versionId, hit);
  }
  return hit;
}

const ACTIVE = new Set(["queued", "running"]);

/** The peaks of one share of a Monte Carlo run, summarised and stored as the run's chunk (idempotent, as all chunks). */
export async function processMonteCarloChunk(run: RunRecord, chunk: ChunkJob, worker: string, peaks: PeakEvaluator): Promise<string> {
  const spec = run.spec as unknown as MonteCarloRunSpec;
  const model = await versionModel(spec.versionId);
  const J = model.nollIndices.length;
  const limits = spec.limits === "uniform" ? spec.uniformLinearNm : spec.perTermLinearNm;
  const summary = emptyMonteCarlo(spec.ttlBudgetPmPerNrad);
  const began = performance.now();
  for (let first = chunk.first, block = 0; first < chunk.first + chunk.count; first += MONTE_CARLO_CHUNK, block++) {
    // A cancelled run stops within a few blocks.
    if (block > 0 && block % 8 === 0) {
      const now = await loadRun(run.id);
      if (!now || !ACTIVE.has(now.state)) return "skipped: the run has ended";
    }
    const count = Math.min(MONTE_CARLO_CHUNK, chunk.first + chunk.count - first);
    const samples = monteCarloSamples(limits, spec.budgetRmsNm, spec.seed, first / MONTE_CARLO_CHUNK, count);
    addMonteCarloPeaks(summary, samples, await peaks(model, samples), J);
  }
  const bytes = new TextEncoder().encode(JSON.stringify(summary));
  const stored = await storeRunChunk(run.id, { sampleSet: "monte-carlo", index: chunk.index, first: chunk.first, count: chunk.count, maps: bytes }, worker);
  if (!stored.stored) return "skipped: the run ended while the chunk was computed";
  await appendRunLog(
    run.id,
    `samples ${chunk.first}-${chunk.first + chunk.count - 1} in ${((performance.now() - began) / 1000).toFixed(2)} s, worst ${summary.worstPmPerNrad.toPrecision(4)} pm/nrad; ${stored.done}/${stored.total} samples done`,
    "info",
    worker,
  );
  return "stored";
}

/** Exact maps of some wavefronts, as the worker's propagator gives them. */
export type ExactMaps = (model: SurrogateModel, coefficientsNm: Float64Array) => Promise<{ x: Float64Array; y: Float64Array; undefinedNodes?: ArrayLike<number> }>;

function keyOf(model: SurrogateModel, k: number): string {
  return String(model.zernike.ordering === "ansi" ? nollToAnsi(model.nollIndices[k]) : model.nollIndices[k]);
}

/**
 * The last step of a Monte Carlo run: merge the shares, propagate the 100 worst samples exactly (the guarantee is
 * about the optics, not the model) and store the result: the limits, the worst TTL found, the fraction of the budget
 * used, the histogram of per-wavefront peaks, and the worst samples with their exact peak beside the model's.
 */
export async function finishMonteCarlo(run: RunRecord, worker: string, exact: ExactMaps): Promise<string> {
  const spec = run.spec as unknown as MonteCarloRunSpec;
  const model = await versionModel(spec.versionId);
  const J = model.nollIndices.length;
  const chunks = (await loadRunChunks(run.id)).filter((c) => c.sampleSet === "monte-carlo");
  const parts = chunks.map((c) => JSON.parse(new TextDecoder().decode(c.maps)) as MonteCarloSummary);
  const merged = mergeMonteCarlo(parts);
  if (merged.samples !== spec.samples) throw new Error(`the Monte Carlo has ${merged.samples} of ${spec.samples} samples stored`);
  await appendRunLog(run.id, `all ${merged.samples} samples evaluated; propagating the ${merged.worst.length} worst exactly`, "info", worker);
  const worstCoefficients = Float64Array.from(merged.worst.flatMap((w) => w.coefficientsNm));
  const nodes = model.pointsPerAxis ** 2;
  const exactPeaks: (number | null)[] = [];
  const began = performance.now();
  // Slices in parallel, so that a pool's threads share them.
  const slice = 25;
  const maps = await Promise.all(
    Array.from({ length: Math.ceil(merged.worst.length / slice) }, (_, k) =>
      exact(model, worstCoefficients.subarray(k * slice * J, Math.min(merged.worst.length, (k + 1) * slice) * J)),
    ),
  );
  maps.forEach((m, k) => {
    const undefinedNodes = new Set(Array.from(m.undefinedNodes ?? []));
    for (let s = 0; s < m.x.length / nodes; s++) {
      let peak: number | null = null;
      for (let n = 0; n < nodes; n++) {
        if (undefinedNodes.has(s * nodes + n)) continue;
        peak = Math.max(peak ?? 0, Math.abs(m.x[s * nodes + n]), Math.abs(m.y[s * nodes + n]));
      }
      exactPeaks[k * slice + s] = peak;
    }
  });
  const tau = spec.ttlBudgetPmPerNrad;
  const limitsOf = (linear: number[]) => {
    const linearLimitsNm: Record<string, number> = {};
    const crossLimitsNm2: Record<string, number> = {};
    for (let i = 0; i < J; i++) {
      linearLimitsNm[keyOf(model, i)] = linear[i];
      for (let j = i; j < J; j++) crossLimitsNm2[`${keyOf(model, i)},${keyOf(model, j)}`] = linear[i] * linear[j];
    }
    return { linearLimitsNm, crossLimitsNm2 };
  };
  // Runs queued before the shares were recorded have none.
  const keyed = (values: number[] | undefined) => (values ? Object.fromEntries(values.map((v, i) => [keyOf(model, i), v])) : null);
  const uniform = limitsOf(spec.uniformLinearNm);
  const perTerm = limitsOf(spec.perTermLinearNm);
  const exactWorst = Math.max(0, ...exactPeaks.map((v) => v ?? 0));
  const result = {
    model: run.modelSlug,
    version: spec.version,
    coefficientsSha256: coefficientsSha256(model),
    ttlBudgetPmPerNrad: tau,
    budgetRmsNm: spec.budgetRmsNm,
    ordering: model.zernike.ordering,
    linearLimitsNm: uniform.linearLimitsNm,
    crossLimitsNm2: uniform.crossLimitsNm2,
    boundPmPerNrad: spec.uniformBoundPmPerNrad,
    perTerm: {
      ...perTerm,
      boundPmPerNrad: spec.perTermBoundPmPerNrad,
      couplingPmPerNradPerNm: keyed(spec.perTermCouplingPmPerNradPerNm),
      sharePmPerNrad: keyed(spec.perTermSharePmPerNrad),
    },
    zeroWfePeakPmPerNrad: spec.zeroWfePeakPmPerNrad,
    verified: {
      limits: spec.limits,
      samples: merged.samples,
      seed: spec.seed,
      worstPmPerNrad: merged.worstPmPerNrad,
      budgetFractionUsed: merged.worstPmPerNrad / tau,
      histogram: { binWidthPmPerNrad: merged.binWidthPmPerNrad, counts: merged.histogram, lastBinIsOverflow: true },
      worstSamples: merged.worst.map((w, k) => ({
        wavefront: { ordering: model.zernike.ordering, coefficientsNm: Object.fromEntries(w.coefficientsNm.map((v, i) => [keyOf(model, i), v])) },
        modelPeakPmPerNrad: w.peakPmPerNrad,
        exactPeakPmPerNrad: exactPeaks[k] ?? null,
      })),
      exactWorstPmPerNrad: exactWorst,
      exactOverBudget: exactPeaks.filter((v) => v !== null && v > tau).length,
    },
    notice: SURROGATE_NOTICE,
  };
  const seconds = (performance.now() - began) / 1000;
  const written = await completeRun(run.id, worker, async () => ({
    versionId: null,
    result,
    message:
      `succeeded: worst ${merged.worstPmPerNrad.toPrecision(4)} pm/nrad on the model (${(100 * merged.worstPmPerNrad / tau).toFixed(1)} % of the budget) over ${merged.samples} samples;` +
      ` the ${merged.worst.length} worst propagated exactly in ${seconds.toFixed(1)} s, exact worst ${exactWorst.toPrecision(4)} pm/nrad` +
      (result.verified.exactOverBudget > 0 ? `, ${result.verified.exactOverBudget} of them above the budget in the exact calculation` : ""),
  }));
  return written ? "succeeded" : "skipped: the run ended before its result was written";
}

/**
 * The last step of a pruning run: prune the parent with its validation set (propagated by the run's chunks), and store
 * the derived draft with its parent recorded and the bound and the seen error in its pruning report.
 */
export async function finishPruning(run: RunRecord, model: ModelRecord, worker: string, validation: SampleSet | null): Promise<string> {
  const spec = run.spec as unknown as PruningRunSpec;
  const parent = await versionModel(spec.parentVersionId);
  // An uploaded validation set is stored with its exact maps: nothing was propagated, it is read here.
  if (spec.validationSet !== null && isUploaded(spec.validationSet)) validation = await loadSampleSet(model.id, spec.validationSet.generatingSetId, model.setup.farField.pointsPerAxis);
  const began = performance.now();
  const pruned = prunedVersionModel(parent, spec.prune, validation ?? undefined);
  const file = encodeModel(pruned);
  const report = pruned.pruning!;
  const written = await completeRun(run.id, worker, async (trx) => {
    const { id, version } = await insertVersion(trx, { model, surrogate: pruned, file, createdBy: run.createdBy, parentVersionId: spec.parentVersionId, runId: run.id });
    return {
      versionId: id,
      result: {
        parentVersion: spec.parentVersion,
        termCount: pruned.terms.length,
        parentTermCount: report.parentTermCount,
        droppedTtlBoundPmPerNrad: report.droppedTtlBoundPmPerNrad,
        droppedNoiseBoundPm: report.droppedNoiseBoundPm,
        droppedTtlSeenPmPerNrad: report.droppedTtlSeenPmPerNrad,
        notice: SURROGATE_NOTICE,
      },
      message:
        `succeeded: version ${version} (draft) pruned from version ${spec.parentVersion}, ${pruned.terms.length} of ${report.parentTermCount} terms in ${((performance.now() - began) / 1000).toFixed(1)} s;` +
        ` dropped terms bounded by ${report.droppedTtlBoundPmPerNrad.toPrecision(3)} pm/nrad` +
        (report.droppedTtlSeenPmPerNrad === null ? " (no validation set to check it on)" : `, seen ${report.droppedTtlSeenPmPerNrad.toPrecision(3)} pm/nrad on the validation set`),
    };
  });
  return written ? "succeeded" : "skipped: the run ended before its version was written";
}
