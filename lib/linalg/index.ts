export { householderQr, applyQTransposeInPlace, solveUpperTriangular, rDiagonal } from "./householderQr.ts";
export type { HouseholderQr } from "./householderQr.ts";
export { conditionNumber } from "./conditionNumber.ts";
export { packColumns, multiplyPackedInto, PANEL_WIDTH } from "./matrixProduct.ts";
export type { PackedColumns } from "./matrixProduct.ts";
export { symmetricEigenInto, symmetricEigenWork, type SymmetricEigenWork } from "./symmetricEigen.ts";
