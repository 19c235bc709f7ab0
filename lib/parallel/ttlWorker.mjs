// Worker-thread entry for exact TTL maps. The numerical core is TypeScript, so the
// worker loads it through tsx whether or not its parent thread already did.
import { move } from "piscina";
import { register } from "tsx/esm/api";

register();
const { runTtlTask } = await import("./ttlTask.ts");

/**
 * Returns the x maps, the y maps and then the task's undefined node indices (exact small integers)
 * in one buffer, moved (not copied) back to the caller.
 */
export default function ttlWorker(task) {
  const { x, y, undefinedNodes } = runTtlTask(task);
  const all = new Float64Array(x.length + y.length + undefinedNodes.length);
  all.set(x);
  all.set(y, x.length);
  all.set(undefinedNodes, x.length + y.length);
  return move(all);
}
