import { Queue, type JobsOptions } from "bullmq";
import { getConfig } from "../config/index.ts";
import { queuePrefix, redisConnection } from "../queue/connection.ts";

/** The queue that carries mail, apart from the training work so a mail never waits behind a long fit. */
export const MAIL_QUEUE = "mail";

export interface MailJob {
  notificationId: number;
}

const holder = globalThis as typeof globalThis & { __stillpointMailQueue?: Queue };

export function mailQueue(): Queue {
  if (!holder.__stillpointMailQueue) {
    const queue = new Queue(MAIL_QUEUE, { connection: redisConnection("client"), prefix: queuePrefix() });
    // Connection errors surface on the calls that fail (see dispatchMail).
    queue.on("error", () => {});
    holder.__stillpointMailQueue = queue;
  }
  return holder.__stillpointMailQueue;
}

/**
 * One job per notification, its id derived from the row, so putting the same row on the queue twice adds nothing.
 * Tries and the first delay between them (doubled each time) come from MAIL_ATTEMPTS and MAIL_RETRY_DELAY_MS.
 */
export function mailJobOptions(notificationId: number): JobsOptions {
  const { attempts, retryDelayMs } = getConfig().mail;
  return {
    jobId: `mail-${notificationId}`,
    attempts,
    backoff: { type: "exponential", delay: retryDelayMs },
    removeOnComplete: true,
    removeOnFail: 1000,
  };
}

/** Put notifications on the mail queue. @throws whatever Redis answers when it cannot be reached */
export async function addMailJobs(notificationIds: readonly number[]): Promise<void> {
  if (notificationIds.length === 0) return;
  await mailQueue().addBulk(notificationIds.map((id) => ({ name: "send", data: { notificationId: id } satisfies MailJob, opts: mailJobOptions(id) })));
}

export async function closeMailQueue(): Promise<void> {
  await holder.__stillpointMailQueue?.close();
  holder.__stillpointMailQueue = undefined;
}
