import type { Knex } from "knex";
import { assertCan, type Actor } from "../access/actor.ts";
import { db } from "./knex.ts";
import { toIso } from "./rows.ts";

export const NOTIFICATION_STATES = ["queued", "sent", "failed"] as const;
export type NotificationState = (typeof NOTIFICATION_STATES)[number];

/** Longest error text kept on a row (the column's width). */
const MAX_ERROR_CHARS = 1000;

interface NotificationRow {
  id: number | string;
  kind: string;
  recipient: string;
  recipient_user_id: number | null;
  subject: string;
  body: string;
  version_id: number | null;
  state: NotificationState;
  attempts: number;
  last_error: string | null;
  message_id: string | null;
  created_at: Date;
  last_attempt_at: Date | null;
  sent_at: Date | null;
}

/** One mail to one recipient, as the queue's worker sends it. */
export interface StoredMail {
  id: number;
  kind: string;
  recipient: string;
  subject: string;
  body: string;
  state: NotificationState;
  attempts: number;
}

/** A notification as the mailbox page lists it. */
export interface NotificationSummary extends StoredMail {
  versionId: number | null;
  lastError: string | null;
  messageId: string | null;
  createdAt: string;
  lastAttemptAt: string | null;
  sentAt: string | null;
}

export interface NewNotification {
  kind: string;
  recipient: string;
  recipientUserId: number | null;
  subject: string;
  body: string;
  versionId: number | null;
}

function toStored(row: NotificationRow): StoredMail {
  return { id: Number(row.id), kind: row.kind, recipient: row.recipient, subject: row.subject, body: row.body, state: row.state, attempts: row.attempts };
}

/** Write queued notifications, inside the caller's transaction when it passes one. @returns their ids, in order */
export async function insertNotifications(rows: NewNotification[], conn: Knex = db()): Promise<number[]> {
  const ids: number[] = [];
  // One insert per row: MariaDB reports only the first id of a multi-row insert.
  for (const row of rows) {
    const [id] = await conn("notifications").insert({
      kind: row.kind,
      recipient: row.recipient,
      recipient_user_id: row.recipientUserId,
      subject: row.subject.slice(0, 250),
      body: row.body,
      version_id: row.versionId,
      state: "queued",
    });
    ids.push(Number(id));
  }
  return ids;
}

/**
 * Count one more try of a queued notification and hand it to the sender; null when it is no longer queued (sent by
 * an earlier try, or given up), so a job that runs twice sends once.
 */
export async function beginNotificationAttempt(id: number, conn: Knex = db()): Promise<StoredMail | null> {
  return conn.transaction(async (trx) => {
    const row: NotificationRow | undefined = await trx("notifications").where({ id }).forUpdate().first();
    if (!row || row.state !== "queued") return null;
    await trx("notifications").where({ id }).update({ attempts: row.attempts + 1, last_attempt_at: trx.fn.now(3) });
    return toStored({ ...row, attempts: row.attempts + 1 });
  });
}

export async function markNotificationSent(id: number, messageId: string | null, conn: Knex = db()): Promise<void> {
  await conn("notifications").where({ id }).update({ state: "sent", sent_at: conn.fn.now(3), message_id: messageId?.slice(0, 250) ?? null, last_error: null });
}

/** Record why a try failed; `final` when no try is left (the row becomes failed). */
export async function markNotificationAttemptFailed(id: number, error: string, final: boolean, conn: Knex = db()): Promise<void> {
  await conn("notifications")
    .where({ id, state: "queued" })
    .update({ last_error: error.slice(0, MAX_ERROR_CHARS), ...(final ? { state: "failed" } : {}) });
}

/** Ids of notifications still queued that were written more than `olderThanMs` ago (to put back on the queue). */
export async function queuedNotificationIds(olderThanMs: number, limit = 500, conn: Knex = db()): Promise<number[]> {
  const rows: { id: number | string }[] = await conn("notifications")
    .select("id")
    .where({ state: "queued" })
    .where("created_at", "<", new Date(Date.now() - olderThanMs))
    .orderBy("id")
    .limit(limit);
  return rows.map((r) => Number(r.id));
}

/** The latest notifications, newest first (admins). */
export async function listNotifications(actor: Actor, options: { limit?: number } = {}, conn: Knex = db()): Promise<NotificationSummary[]> {
  assertCan(actor, "admin");
  const rows: NotificationRow[] = await conn("notifications").orderBy("id", "desc").limit(options.limit ?? 100);
  return rows.map((row) => ({
    ...toStored(row),
    versionId: row.version_id,
    lastError: row.last_error,
    messageId: row.message_id,
    createdAt: toIso(row.created_at)!,
    lastAttemptAt: toIso(row.last_attempt_at),
    sentAt: toIso(row.sent_at),
  }));
}
