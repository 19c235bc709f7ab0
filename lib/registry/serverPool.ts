import { getConfig } from "../config/index.ts";
import { createComputePool, type ComputePool } from "../parallel/computePool.ts";

const holder = globalThis as typeof globalThis & { __stillpointServerPool?: ComputePool };

/** The web server's worker pool for large evaluation batches (started on first use). */
export function serverComputePool(): ComputePool {
  holder.__stillpointServerPool ??= createComputePool({ threads: getConfig().serverComputeThreads });
  return holder.__stillpointServerPool;
}
