// Worker-thread entry for batched surrogate evaluation. The numerical core is TypeScript, so the worker loads
// it through tsx whether or not its parent thread already did.
import { parentPort, workerData } from "node:worker_threads";
import { register } from "tsx/esm/api";

register();
const { evaluateBatchInto } = await import("./evaluate.ts");

// The model arrives once; its coefficients live in shared memory (no copy).
const model = { ...workerData.model, coefficients: new Float64Array(workerData.coefficients) };

parentPort.on("message", ({ id, input, output, rowStart, rowEnd }) => {
  try {
    evaluateBatchInto(model, new Float64Array(input), new Float64Array(output), rowStart, rowEnd);
    parentPort.postMessage({ id });
  } catch (error) {
    parentPort.postMessage({ id, error: error instanceof Error ? error.message : String(error) });
  }
});
parentPort.postMessage({ ready: true });
