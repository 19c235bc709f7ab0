import type { OpticalSetup, ZernikeSet } from "../optics/types.ts";
import type { DesignName } from "./designs.ts";
import type { ResidualStatistics } from "./statistics.ts";
import type { SurrogateOrder, Term } from "./terms.ts";
import type { ValidityRange } from "./validity.ts";

/** Where a model's generating and validation sets came from, and what made it. */
export interface Provenance {
  design: DesignName;
  /** Number of generating samples. */
  size: number;
  /** Largest total RMS asked of the design (random, axes-and-pairs), nm; null for an uploaded set. */
  maxRmsNm: number | null;
  /** Step d of the axes-and-pairs design, nm. */
  stepNm: number | null;
  seed: number | null;
  /** SHA-256 (hex) of an uploaded set's coefficients and maps as Float64 little-endian bytes. */
  uploadedSha256: string | null;
  /** Validation set: random directions with total RMS uniform in [0, maxRmsNm] (`randomAmplitudeDesign`). */
  validationSet: { size: number; maxRmsNm: number; seed: number } | null;
  /** SHA-256 (hex, as `uploadedSha256`) of an uploaded validation set; null when the set was built in. */
  validationUploadedSha256?: string | null;
  softwareVersion: string;
  /** ISO 8601 time of training, supplied by the caller. */
  createdAt: string;
}

/** What a fit reported. */
export interface FitReport {
  /** Generating samples S. */
  samples: number;
  /** 2-norm condition number of the design matrix (features in nm^degree) with each column scaled to unit length. */
  conditionNumber: number;
  /** RMS of the least-squares residual over samples, nodes and both axes, pm/nrad (0 for a square design). */
  trainingResidualRmsPmPerNrad: number;
}

/** How a pruned model was derived from its parent. */
export interface PruningReport {
  parentTermCount: number;
  parentCoefficientsSha256: string;
  budgetRmsNm: number;
  jitterNrad: number;
  thresholdPm: number;
  /** Bound on the TTL the dropped terms can add for any wavefront inside the budget, pm/nrad. */
  droppedTtlBoundPmPerNrad: number;
  /** The same bound times the jitter, pm. */
  droppedNoiseBoundPm: number;
  /** Largest |pruned - parent| on the validation wavefronts scaled into the budget, pm/nrad (null without a set). */
  droppedTtlSeenPmPerNrad: number | null;
}

/**
 * A polynomial TTL surrogate: `c(theta; a) = sum_t C_t(theta) f_t(a)` at every node and for both axes,
 * with `f_t` the term's product of Zernike coefficients (nm RMS) and `C_t` in pm/nrad per nm^degree.
 */
export interface SurrogateModel {
  setup: OpticalSetup;
  /** The Zernike set as the user gave it (its ordering is the one of the user's wavefronts). */
  zernike: ZernikeSet;
  /** The model's variables, in Noll indices, in the order of the coefficient vectors it takes. */
  nollIndices: number[];
  order: SurrogateOrder;
  terms: Term[];
  pointsPerAxis: number;
  /** Term-major `T x 2 M^2`: row t is `[c_x map, c_y map]`, each row-major `[iy][ix]`. */
  coefficients: Float64Array;
  validity: ValidityRange;
  provenance: Provenance;
  fit: FitReport;
  statistics: ResidualStatistics | null;
  pruning: PruningReport | null;
}

/** Notice attached to every surrogate number that leaves the product. */
export const SURROGATE_NOTICE =
  "Surrogate results are engineering estimates within the model's validity range; decisions about flight hardware rest on the exact calculation and the mission's own review.";
