import type { Knex } from "knex";
import { db } from "../db/knex.ts";
import { insertNotifications, markNotificationAttemptFailed } from "../db/notifications.ts";
import { addMailJobs } from "./queue.ts";

/**
 * The kinds of mail the product sends. Add a kind here when a new event sends mail; the `notifications` table stores
 * it as a plain string, so a new kind needs no migration.
 */
export const MAIL_KINDS = ["version-submitted", "version-decided", "invitation", "version-retired"] as const;
export type MailKind = (typeof MAIL_KINDS)[number];

export interface MailRecipient {
  email: string;
  /** The account, when the recipient has one. */
  userId: number | null;
}

/** One message to one or more recipients (each gets a copy of their own and a notifications row). */
export interface OutgoingMail {
  kind: MailKind;
  to: readonly MailRecipient[];
  subject: string;
  /** Plain text. */
  text: string;
  /** The version the mail is about, if any. */
  versionId?: number | null;
}

/** How long an event waits for the job queue to take its mails before it goes on without (the rows stay queued). */
const DISPATCH_TIMEOUT_MS = 2000;

/**
 * Write the notifications rows of some mails (state `queued`) inside the caller's transaction, so that they exist
 * exactly when the event that causes them is committed. Call `dispatchMail` with the ids after the commit.
 * @returns one notification id per recipient
 */
export async function recordMail(trx: Knex | Knex.Transaction, mails: readonly OutgoingMail[]): Promise<number[]> {
  return insertNotifications(
    mails.flatMap((mail) =>
      mail.to.map((recipient) => ({
        kind: mail.kind,
        recipient: recipient.email,
        recipientUserId: recipient.userId,
        subject: mail.subject,
        body: mail.text,
        versionId: mail.versionId ?? null,
      })),
    ),
    trx,
  );
}

/**
 * Hand recorded notifications to the mail queue. Never throws: with Redis down, the rows stay `queued` with the
 * reason, and every mail worker puts queued rows back on the queue (`sweepQueuedMail`), so the mail goes out late
 * rather than never, and whatever caused it stands.
 */
export async function dispatchMail(notificationIds: readonly number[]): Promise<void> {
  if (notificationIds.length === 0) return;
  let timer: NodeJS.Timeout | undefined;
  try {
    // A queue client waits for Redis to come back; the caller does not (the jobs are added whenever it does).
    const gaveUp = new Promise<never>((_, reject) => {
      timer = setTimeout(() => reject(new Error(`no answer within ${DISPATCH_TIMEOUT_MS} ms`)), DISPATCH_TIMEOUT_MS);
    });
    await Promise.race([addMailJobs(notificationIds), gaveUp]);
  } catch (error) {
    const reason = `not queued yet (the job queue did not answer: ${(error as Error).message}); a mail worker will queue it`;
    for (const id of notificationIds) await markNotificationAttemptFailed(id, reason, false).catch(() => {});
  } finally {
    clearTimeout(timer);
  }
}

/** Record and queue mails outside any other transaction (for events that are already committed). */
export async function enqueueMail(mails: OutgoingMail | readonly OutgoingMail[], conn: Knex = db()): Promise<number[]> {
  const ids = await conn.transaction((trx) => recordMail(trx, Array.isArray(mails) ? mails : [mails as OutgoingMail]));
  await dispatchMail(ids);
  return ids;
}
