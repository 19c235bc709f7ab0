// Worker-thread entry for exact TTL maps. The numerical core is TypeScript, so the
// worker loads it through tsx whether or not its parent thread already did.
import { move } from "piscina";
import { register } from "tsx/esm/api";

register();
const { runTtlTask } = await import("./ttlTask.ts");

/** Returns x then y maps in one buffer, moved (not copied) back to the caller. */
export default function ttlWorker(task) {
  const { x, y } = runTtlTask(task);
  const both = new Float64Array(x.length + y.length);
  both.set(x);
  both.set(y, x.length);
  return move(both);
}
