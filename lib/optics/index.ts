export type { FarFieldGrid, FlatTtlMaps, OpticalSetup, TtlMap, Wavefront, ZernikeOrdering, ZernikeSet } from "./types.ts";
export {
  MAX_ANSI_INDEX, MAX_NOLL_INDEX, MAX_RADIAL_ORDER, ZernikeTerm, ansiToNoll, nollToAnsi, nollToOrders, ordersToNoll,
  radialCoefficients, requireNollIndices, toNollIndex, toNollIndices, zernike, type ZernikeOrders,
} from "./zernike.ts";
export {
  MAX_POINTS_PER_AXIS, MAX_PUPIL_SAMPLES, MIN_POINTS_PER_AXIS, MIN_PUPIL_SAMPLES, POSITIVE_SETUP_FIELDS, SETUP_MESSAGES,
  thetaGridNrad, validateSetup, type PositiveSetupField,
} from "./setup.ts";
export { CHECK_MESSAGES, requirePositiveFinite } from "./checks.ts";
export { apertureTransmission, cellFractionInsideCircle, pupilCoordinates } from "./pupil.ts";
export { phasorsInto } from "./phasor.ts";
export { NULL_FIELD_RELATIVE, TtlPropagator, ttlFromFieldInto, type FarFieldMoments } from "./propagator.ts";
export { nollCoefficients, unionNollIndices, wavefrontToVector } from "./wavefront.ts";
export {
  peakAbsTtl, requireDefinedTtl, toTtlMap, undefinedNodePosition, undefinedNodesWarning,
} from "./ttlMap.ts";
export {
  beamToApertureRatio, derivedQuantities, diffractionAngleNrad, fresnelNumber, onAxisGain, onAxisGainOptimum,
  type DerivedInput, type DerivedQuantities,
} from "./derived.ts";
export { fitZernike, MAX_FIT_PIXELS, type HeightMap, type HeightUnit, type ZernikeFit } from "./zernikeFit.ts";
export { MAX_PUPIL_MAP_SAMPLES, MEASURED_PICTURE_SAMPLES, pupilMap, resampleToPupil, wavefrontPupilMap } from "./pupilMap.ts";
