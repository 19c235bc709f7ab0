// Worker-thread entry of the compute pool (lib/parallel/computePool.ts). The numerical core is TypeScript, so
// the worker loads it through tsx whether or not its parent thread already did.
import { move } from "piscina";
import { register } from "tsx/esm/api";

register();
const { runComputeTask } = await import("./computeTask.ts");

/** Exact TTL maps come back moved (not copied); batched evaluation writes into shared memory; analyses are cloned. */
export default function computeWorker(task) {
  const result = runComputeTask(task);
  return result instanceof Float64Array ? move(result) : result;
}
