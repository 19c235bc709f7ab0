import { availableParallelism } from "node:os";
import { fileURLToPath } from "node:url";
import { Piscina } from "piscina";
import { getConfig } from "../../lib/config/index.ts";
import { closeDb } from "../../lib/db/knex.ts";
import { startWorker } from "../../lib/queue/worker.ts";
import { parseOptions, parseThreads } from "../io.ts";

const TTL_WORKER = fileURLToPath(new URL("../../lib/parallel/ttlWorker.mjs", import.meta.url));

/**
 * `stillpoint worker [--threads N]`: take training work from the shared queue until stopped (SIGINT/SIGTERM), with
 * one compute thread per job in hand. REDIS_URL and DATABASE_URL (or the DATABASE_* variables) name the services.
 */
export async function run(argv: string[]): Promise<number> {
  const options = parseOptions(argv, [], ["threads"]);
  const config = getConfig();
  const threads = parseThreads(options.threads) ?? config.queue.workerThreads ?? availableParallelism();
  const pool = new Piscina({ filename: TTL_WORKER, minThreads: threads, maxThreads: threads, idleTimeout: 60_000 });
  const worker = startWorker({
    concurrency: threads,
    propagate: async (setup, nollIndices, coefficientsNm) => {
      const count = coefficientsNm.length / nollIndices.length;
      const both: Float64Array = await pool.run({ setup, nollIndices: [...nollIndices], coefficientsNm, count });
      const half = both.length / 2;
      return { x: both.subarray(0, half), y: both.subarray(half) };
    },
  });
  const database = `${config.database.host}:${config.database.port}/${config.database.name}`;
  process.stderr.write(`[worker ${worker.name}] taking work from ${config.redisUrl.replace(/\/\/[^@/]*@/, "//")} (queue prefix ${config.queue.prefix}), database ${database}, ${threads} compute threads\n`);

  await new Promise<void>((resolve) => {
    const stop = (signal: string) => {
      process.stderr.write(`[worker ${worker.name}] ${signal}: finishing the jobs in hand, then stopping\n`);
      resolve();
    };
    process.once("SIGINT", () => stop("SIGINT"));
    process.once("SIGTERM", () => stop("SIGTERM"));
  });
  await worker.close();
  await pool.destroy();
  await closeDb();
  return 0;
}
