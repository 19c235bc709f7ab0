import { UnrecoverableError, Worker, type Job } from "bullmq";
import type { Transporter } from "nodemailer";
import { beginNotificationAttempt, markNotificationAttemptFailed, markNotificationSent, queuedNotificationIds } from "../db/notifications.ts";
import { queuePrefix, redisConnection } from "../queue/connection.ts";
import { addMailJobs, MAIL_QUEUE, type MailJob } from "./queue.ts";
import { createMailTransport, sendStoredMail } from "./transport.ts";

export interface MailWorkerOptions {
  /** Where progress lines go (stderr by default). */
  log?: (line: string) => void;
  /** How often queued rows that are not on the queue are put back, ms (default 15 s). */
  sweepEveryMs?: number;
  /** Only rows written longer ago than this are put back, ms (default 10 s). */
  sweepAfterMs?: number;
  transport?: Transporter;
}

export interface MailWorkerHandle {
  close(): Promise<void>;
}

/** A row still queued this long after it was written is put on the queue again (a no-op if its job exists). */
const SWEEP_AFTER_MS = 10_000;

/** Put queued notifications whose job may be missing (Redis was down when they were written) back on the queue. */
export async function sweepQueuedMail(olderThanMs = SWEEP_AFTER_MS): Promise<number> {
  const ids = await queuedNotificationIds(olderThanMs);
  await addMailJobs(ids);
  return ids.length;
}

function isPermanentRefusal(error: unknown): boolean {
  const code = (error as { responseCode?: unknown }).responseCode;
  return typeof code === "number" && code >= 500 && code < 600;
}

/**
 * Send mail from the queue: each job is one notifications row, tried until it goes out or its tries run out
 * (exponential backoff, see mailJobOptions); a permanent refusal (5xx) fails at once. Every try is counted on the row with its error; a row already sent is
 * skipped, so a job run twice sends once. Runs in every `stillpoint worker` process beside the training work.
 */
export function startMailWorker(options: MailWorkerOptions = {}): MailWorkerHandle {
  const log = options.log ?? ((line: string) => process.stderr.write(`[mail] ${line}\n`));
  const transport = options.transport ?? createMailTransport();
  const connection = redisConnection("worker");
  const worker = new Worker(
    MAIL_QUEUE,
    async (job: Job<MailJob>) => {
      const mail = await beginNotificationAttempt(job.data.notificationId);
      if (!mail) return "skipped: no longer queued";
      try {
        const messageId = await sendStoredMail(transport, mail);
        await markNotificationSent(mail.id, messageId);
        log(`sent notification ${mail.id} (${mail.kind}) to ${mail.recipient}`);
        return "sent";
      } catch (error) {
        // A 5xx answer (an unknown mailbox, a refused sender) is permanent: trying again cannot help.
        const permanent = isPermanentRefusal(error);
        const final = permanent || job.attemptsMade + 1 >= (job.opts.attempts ?? 1);
        const message = (error as Error).message || String(error);
        await markNotificationAttemptFailed(mail.id, message, final);
        log(`notification ${mail.id} to ${mail.recipient}, try ${mail.attempts}: ${message}${final ? "; giving up" : "; will retry"}`);
        throw permanent ? new UnrecoverableError(message) : error;
      }
    },
    { connection, prefix: queuePrefix(), concurrency: 4 },
  );
  worker.on("error", (error) => log(`queue error: ${error.message}`));

  const sweep = () => {
    sweepQueuedMail(options.sweepAfterMs ?? SWEEP_AFTER_MS).then(
      (count) => count > 0 && log(`put ${count} queued notification(s) back on the queue`),
      (error: Error) => log(`could not sweep queued mail: ${error.message}`),
    );
  };
  sweep();
  const timer = setInterval(sweep, options.sweepEveryMs ?? 15_000);
  timer.unref();

  return {
    async close() {
      clearInterval(timer);
      await worker.close();
      connection.disconnect();
      if (!options.transport) transport.close();
    },
  };
}
