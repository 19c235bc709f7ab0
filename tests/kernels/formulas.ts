// The closed-form inputs of tests/fixtures/kernels/make_kernels.py, written again here (integer arithmetic and
// one IEEE division, so both languages produce the same doubles). The fixture holds NumPy's answers for them.
import { readFileSync } from "node:fs";

export const aProduct = (i: number, k: number) => (((i * 31 + k * 17) % 23) - 11) / 7;
export const bProduct = (k: number, j: number) => (((k * 13 + j * 29) % 19) - 9) / 5;
export const fSingle = (s: number, t: number) => (((s * 7 + t * 11) % 29) - 14) / 3;
export const cSingle = (t: number, p: number) => (((t * 5 + p * 3) % 31) - 15) / 9;
export const xDesign = (i: number, j: number) => (((i * i * 7 + j * j * j * 3 + i * j * 5 + i + 2 * j) % 1009) - 504) / 101;
export const yDesign = (i: number, c: number) => (((i * 11 + c * 7) % 17) - 8) / 4;
export const uSample = (n: number) => ({ re: (((n * 7) % 11) - 5) / 4, im: (((n * 5) % 13) - 6) / 5 });

/** Row-major `rows x cols` matrix of f(i, j). */
export function matrix(f: (i: number, j: number) => number, rows: number, cols: number): Float64Array {
  const out = new Float64Array(rows * cols);
  for (let i = 0; i < rows; i++) for (let j = 0; j < cols; j++) out[i * cols + j] = f(i, j);
  return out;
}

export interface KernelFixture {
  numpyVersion: string;
  products: { rows: number; inner: number; cols: number; product: number[] }[];
  float32Products: { rows: number; inner: number; cols: number; exact: number[] }[];
  leastSquares: { rows: number; cols: number; rhs: number; conditionNumber: number; solution: number[]; absDiagonalR: number[] }[];
  foldedTransform: {
    samples: number; wavelengthM: number; sampleSpacingM: number; angleStepRad: number;
    re: number[]; im: number[]; momentRe: number[]; momentIm: number[];
  }[];
}

export const kernelFixture: KernelFixture = JSON.parse(
  readFileSync(new URL("../fixtures/kernels/kernels.json", import.meta.url), "utf8"),
);

/** Unit roundoff of float64 and float32 (IEEE 754 round to nearest). */
export const U64 = 2 ** -53;
export const U32 = 2 ** -24;

/** gamma_n = n u / (1 - n u) (Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., section 3.1). */
export const gamma = (n: number, u: number) => (n * u) / (1 - n * u);

/** Deterministic pseudo-random numbers in [-0.5, 0.5) for comparisons of two implementations. */
export function lcg(seed: number): () => number {
  let state = seed;
  return () => {
    state = (state * 1103515245 + 12345) % 2147483648;
    return state / 2147483648 - 0.5;
  };
}
