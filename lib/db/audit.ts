import type { Knex } from "knex";
import { assertCan, type Actor } from "../access/actor.ts";
import type { AuditQuery } from "../validation/audit.ts";
import { db } from "./knex.ts";
import { decodeCursor, encodeCursor, type Page } from "./rows.ts";

interface AuditEventRow {
  id: number | string;
  actor_user_id: number | null;
  action: string;
  subject_type: string | null;
  subject_id: string | null;
  detail: string | Record<string, unknown> | null;
  client_address: string | null;
  occurred_at: Date;
}

export interface AuditEvent {
  id: number;
  actorUserId: number | null;
  action: string;
  subjectType: string | null;
  subjectId: string | null;
  detail: Record<string, unknown> | null;
  /** The address the request came from (see requestAddress), or null for work no request started (seeds, workers). */
  clientAddress: string | null;
  occurredAt: string;
}

/** An audit event as the audit log shows it: with the acting person's e-mail. */
export interface AuditLogEntry extends AuditEvent {
  actorEmail: string | null;
}

export interface NewAuditEvent {
  actorUserId: number | null;
  action: string;
  subjectType?: string;
  subjectId?: string | number;
  detail?: Record<string, unknown>;
  clientAddress?: string | null;
}

/** Who did it and from where, for an audit event written on an actor's behalf. */
export function auditedBy(actor: Actor): { actorUserId: number; clientAddress: string | null } {
  return { actorUserId: actor.userId, clientAddress: actor.clientAddress ?? null };
}

export async function recordAuditEvent(event: NewAuditEvent, conn: Knex = db()): Promise<void> {
  await conn("audit_events").insert({
    actor_user_id: event.actorUserId,
    action: event.action,
    subject_type: event.subjectType ?? null,
    subject_id: event.subjectId === undefined ? null : String(event.subjectId),
    detail: event.detail === undefined ? null : JSON.stringify(event.detail),
    client_address: event.clientAddress ? event.clientAddress.slice(0, 45) : null,
  });
}

function parseDetail(detail: AuditEventRow["detail"]): Record<string, unknown> | null {
  if (detail === null) return null;
  // MariaDB stores JSON as text, so mysql2 hands it back as a string.
  return typeof detail === "string" ? (JSON.parse(detail) as Record<string, unknown>) : detail;
}

function toEvent(row: AuditEventRow): AuditEvent {
  return {
    id: Number(row.id),
    actorUserId: row.actor_user_id,
    action: row.action,
    subjectType: row.subject_type,
    subjectId: row.subject_id,
    detail: parseDetail(row.detail),
    clientAddress: row.client_address,
    occurredAt: new Date(row.occurred_at).toISOString(),
  };
}

export async function listAuditEventsByActor(
  actorUserId: number,
  limit = 20,
  conn: Knex = db(),
): Promise<AuditEvent[]> {
  const rows: AuditEventRow[] = await conn<AuditEventRow>("audit_events")
    .where({ actor_user_id: actorUserId })
    .orderBy([
      { column: "occurred_at", order: "desc" },
      { column: "id", order: "desc" },
    ])
    .limit(limit);
  return rows.map(toEvent);
}

/** The audit log's filters applied to a query over audit_events (joined with the acting person). */
function filtered(query: Omit<AuditQuery, "limit" | "cursor">, conn: Knex): Knex.QueryBuilder {
  const q = conn("audit_events").leftJoin("users", "users.id", "audit_events.actor_user_id").select("audit_events.*", "users.email as actor_email");
  if (query.person) q.where("users.email", query.person);
  if (query.action) {
    // "token" finds token.create and token.revoke; "sign-in" finds sign-in and sign-in.refused.
    const action = query.action;
    q.where((w) => w.where("audit_events.action", action).orWhere("audit_events.action", "like", `${action.replace(/[\\%_]/g, "\\$&")}.%`));
  }
  if (query.subject) {
    const [type, id] = query.subject.split(":");
    q.where("audit_events.subject_type", type);
    if (id !== undefined) q.where("audit_events.subject_id", id);
  }
  return q;
}

/**
 * One page of the audit log, newest first, filtered by the acting person (e-mail), the action (itself or its
 * sub-actions) and the subject (`type` or `type:id`). Admins only.
 */
export async function listAuditEvents(actor: Actor, query: AuditQuery, conn: Knex = db()): Promise<Page<AuditLogEntry>> {
  assertCan(actor, "admin");
  const q = filtered(query, conn);
  if (query.cursor !== null) q.where("audit_events.id", "<", decodeCursor(query.cursor) ?? 0);
  const rows: (AuditEventRow & { actor_email: string | null })[] = await q.orderBy("audit_events.id", "desc").limit(query.limit + 1);
  const more = rows.length > query.limit;
  const kept = more ? rows.slice(0, query.limit) : rows;
  return {
    items: kept.map((row) => ({ ...toEvent(row), actorEmail: row.actor_email })),
    nextCursor: more ? encodeCursor(Number(kept[kept.length - 1].id)) : null,
  };
}

/** Most rows one CSV export holds (newest first); narrow the filters for older events. */
export const AUDIT_EXPORT_MAX_ROWS = 100_000;

/** The columns of the audit log's CSV export, in order. */
export const AUDIT_CSV_COLUMNS = ["id", "occurred_at", "actor_email", "action", "subject_type", "subject_id", "client_address", "detail"] as const;

/**
 * A field of RFC 4180 CSV: quoted when it holds a comma, quote or line break (quotes doubled). A text that a
 * spreadsheet would run as a formula (starting with =, +, -, @, tab or carriage return) is prefixed with an apostrophe.
 */
export function csvField(value: string | number | null): string {
  if (value === null) return "";
  let text = String(value);
  if (typeof value === "string" && /^[=+\-@\t\r]/.test(text)) text = `'${text}`;
  return /[",\r\n]/.test(text) ? `"${text.replaceAll('"', '""')}"` : text;
}

/** The filtered audit log as CSV (header line first, CRLF line ends, newest first, at most AUDIT_EXPORT_MAX_ROWS). */
export async function auditEventsCsv(actor: Actor, query: Omit<AuditQuery, "limit" | "cursor">, conn: Knex = db()): Promise<string> {
  assertCan(actor, "admin");
  const rows: (AuditEventRow & { actor_email: string | null })[] = await filtered(query, conn).orderBy("audit_events.id", "desc").limit(AUDIT_EXPORT_MAX_ROWS);
  const lines = [AUDIT_CSV_COLUMNS.join(",")];
  for (const row of rows) {
    const e = toEvent(row);
    lines.push(
      [e.id, e.occurredAt, row.actor_email, e.action, e.subjectType, e.subjectId, e.clientAddress, e.detail === null ? null : JSON.stringify(e.detail)]
        .map(csvField)
        .join(","),
    );
  }
  return lines.join("\r\n") + "\r\n";
}

/** The actions recorded so far (for the audit log's filter). */
export async function auditActions(actor: Actor, conn: Knex = db()): Promise<string[]> {
  assertCan(actor, "admin");
  const rows: { action: string }[] = await conn("audit_events").distinct("action").orderBy("action");
  return rows.map((r) => r.action);
}
