export { SplitMix64 } from "./prng.ts";
export {
  checkNollIndices, compileTerms, featureMatrix, featuresInto, firstOrderTerms, fullTermCount, fullTerms, secondOrderTerms,
  termLabel, type CompiledTerms, type SurrogateOrder, type Term,
} from "./terms.ts";
export {
  axesAndPairsDesign, axesAndPairsSize, axesAndPairsStepNm, checkSampleSet, randomAmplitudeDesign, randomDesign, sampleRmsNm,
  type DesignName, type RandomDesignOptions, type SampleSet,
} from "./designs.ts";
export { fitCoefficients, MAX_CONDITION_NUMBER, type FitResult } from "./fit.ts";
export { validityFromSamples, validityWarnings, type TermBound, type ValidityRange } from "./validity.ts";
export { residualStatistics, type ErrorSummary, type ResidualStatistics, type RmsBinSummary } from "./statistics.ts";
export { SURROGATE_NOTICE, type FitReport, type Provenance, type PruningReport, type SurrogateModel } from "./model.ts";
export {
  checkCoefficients, checkFinite, compiledTermsOf, MAP_SUMMARY_WIDTH, summariseMapsInto, evaluateAtOffsets, evaluateBatch, evaluateBatchInto, evaluateInto, evaluateMap,
  packedCoefficients, type SurrogateMap,
} from "./evaluate.ts";
export { axisWeights, interpolateMap, type AxisWeights } from "./interpolate.ts";
export {
  droppedBound, pruneModel, splitAxes, termSignificance, type PruneOptions, type PruneResult, type SignificanceOptions, type TermSignificance,
} from "./significance.ts";
export {
  coefficientsSha256, decodeModel, encodeModel, MODEL_FILE_SIGNATURE, MODEL_FORMAT_VERSION, ModelFileError, roundToStored,
} from "./modelFile.ts";
export { bytesToHex, hexToBytes, sha256Hex } from "./checksum.ts";
export {
  regenerateValidationSet, sampleSetSha256, trainSurrogate, type ExactPropagator, type GeneratingSetSpec, type TrainingPhase, type TrainingRequest,
  type TrainingResult,
} from "./train.ts";
export { outputQuadratic, quadraticAt, type OutputQuadratic } from "./quadratic.ts";
export { maximiseOnBallDiagonal, type BallCase } from "./trustRegion.ts";
export { checkBudgetRmsNm, maximiseAbsQuadraticOnBall, simpleBoundMaps, worstCase, type WorstCase } from "./worstCase.ts";
export { couplingModes, linearMapMatrix, projectOntoModes, type CouplingMode, type ModeProjection } from "./modes.ts";
export { correctWavefront, type CorrectionResult } from "./correction.ts";
export { checkSpectrum, interpolateLogLog, noiseBudget, worstNoiseNode, type NoiseBudget, type Spectrum } from "./noise.ts";
export {
  addMonteCarloPeaks, emptyMonteCarlo, mergeMonteCarlo, MONTE_CARLO_BINS, MONTE_CARLO_CHUNK, monteCarloSamples, requirementLimits,
  type MonteCarloSummary, type Requirements, type TermLimits,
} from "./requirements.ts";
export { runAnalysis, type AnalysisRequest, type AnalysisResult, type AnalysisResults } from "./analysis.ts";
