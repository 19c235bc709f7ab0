import { getConfig } from "../config/index.ts";
import { createComputePool, type ComputePool } from "../parallel/computePool.ts";

/** Unix nice increment of the server pool's threads (0 to 19; higher runs later). */
export const SERVER_POOL_NICE = 10;

const holder = globalThis as typeof globalThis & { __stillpointServerPool?: ComputePool };

/**
 * The web server's worker pool for large evaluation batches (started on first use). Its threads run at a lower
 * priority than the event loop: a 10,000-wavefront batch must not delay the single-offset requests beside it.
 */
export function serverComputePool(): ComputePool {
  holder.__stillpointServerPool ??= createComputePool({ threads: getConfig().serverComputeThreads, niceIncrement: SERVER_POOL_NICE });
  return holder.__stillpointServerPool;
}
