import { availableParallelism } from "node:os";
import { getConfig } from "../../lib/config/index.ts";
import { closeDb } from "../../lib/db/knex.ts";
import { createComputePool } from "../../lib/parallel/index.ts";
import { startMailWorker } from "../../lib/mail/worker.ts";
import { startWorker } from "../../lib/queue/worker.ts";
import { parseOptions, parseThreads } from "../io.ts";

/**
 * `stillpoint worker [--threads N]`: take training work from the shared queue until stopped (SIGINT/SIGTERM), with
 * one compute thread per job in hand, and send the mail on the mail queue (SMTP_HOST, SMTP_PORT, MAIL_FROM).
 * REDIS_URL and DATABASE_URL (or the DATABASE_* variables) name the services.
 */
export async function run(argv: string[]): Promise<number> {
  const options = parseOptions(argv, [], ["threads"]);
  const config = getConfig();
  const threads = parseThreads(options.threads) ?? config.queue.workerThreads ?? availableParallelism();
  const pool = createComputePool({ threads });
  const worker = startWorker({
    concurrency: threads,
    // One chunk of the queue is one task of the pool.
    propagate: (setup, nollIndices, coefficientsNm) =>
      pool.propagate(setup, nollIndices, coefficientsNm, { chunkSize: coefficientsNm.length / nollIndices.length }),
    // A Monte Carlo block's peaks, shared over the pool's threads.
    evaluatePeaks: (model, coefficientsNm) => pool.evaluatePeaks(model, coefficientsNm),
  });
  const mail = startMailWorker({ log: (line) => process.stderr.write(`[worker ${worker.name}] mail: ${line}\n`) });
  const database = `${config.database.host}:${config.database.port}/${config.database.name}`;
  process.stderr.write(`[worker ${worker.name}] taking work from ${config.redisUrl.replace(/\/\/[^@/]*@/, "//")} (queue prefix ${config.queue.prefix}), database ${database}, ${threads} compute threads, mail through ${config.mail.smtp.host}:${config.mail.smtp.port}\n`);

  await new Promise<void>((resolve) => {
    const stop = (signal: string) => {
      process.stderr.write(`[worker ${worker.name}] ${signal}: finishing the jobs in hand, then stopping\n`);
      resolve();
    };
    process.once("SIGINT", () => stop("SIGINT"));
    process.once("SIGTERM", () => stop("SIGTERM"));
  });
  // A signal twice stops at once; otherwise the jobs in hand finish (a stopped job would wait for its lock to expire).
  process.once("SIGTERM", () => process.exit(143));
  process.once("SIGINT", () => process.exit(130));
  await Promise.all([worker.close(), mail.close()]);
  await pool.close();
  await closeDb();
  process.stderr.write(`[worker ${worker.name}] stopped\n`);
  // Nothing else is left to wait for; end even if a library keeps a handle open.
  process.exit(0);
}
