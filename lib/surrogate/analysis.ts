import { fitZernike, type HeightMap, type ZernikeFit } from "../optics/zernikeFit.ts";
import { correctWavefront, type CorrectionResult } from "./correction.ts";
import type { SurrogateModel } from "./model.ts";
import { couplingModes, type CouplingMode } from "./modes.ts";
import { requirementLimits, type Requirements } from "./requirements.ts";
import { worstCase, type WorstCase } from "./worstCase.ts";

/**
 * The analyses heavy enough to leave the calling thread, as plain data so that a worker thread can run them
 * (lib/parallel's pool) exactly as the calling thread would.
 */
export type AnalysisRequest =
  | { kind: "worst-case"; budgetRmsNm: number }
  | { kind: "modes" }
  | { kind: "correction"; coefficientsNm: number[]; adjustable: number[]; limitNm: number }
  | { kind: "requirements"; ttlBudgetPmPerNrad: number; budgetRmsNm: number }
  | { kind: "fit"; map: HeightMap; nollIndices: number[] };

export interface AnalysisResults {
  "worst-case": WorstCase;
  modes: CouplingMode[];
  correction: CorrectionResult;
  requirements: Requirements;
  fit: ZernikeFit;
}

export type AnalysisResult<R extends AnalysisRequest> = AnalysisResults[R["kind"]];

/**
 * Run one analysis. `model` may be null only for the fit, which needs none.
 * @throws {RangeError} from the analysis itself; "this analysis needs a model"
 */
export function runAnalysis<R extends AnalysisRequest>(model: SurrogateModel | null, request: R): AnalysisResult<R> {
  const needModel = (): SurrogateModel => {
    if (!model) throw new RangeError("this analysis needs a model");
    return model;
  };
  switch (request.kind) {
    case "worst-case":
      return worstCase(needModel(), request.budgetRmsNm) as AnalysisResult<R>;
    case "modes":
      return couplingModes(needModel()) as AnalysisResult<R>;
    case "correction":
      return correctWavefront(needModel(), request.coefficientsNm, request.adjustable, request.limitNm) as AnalysisResult<R>;
    case "requirements":
      return requirementLimits(needModel(), request.ttlBudgetPmPerNrad, request.budgetRmsNm) as AnalysisResult<R>;
    case "fit":
      return fitZernike(request.map, request.nollIndices) as AnalysisResult<R>;
    default:
      throw new RangeError(`unknown analysis ${(request as { kind: string }).kind}`);
  }
}
