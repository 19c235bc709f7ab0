import type { Knex } from "knex";
import { db } from "./knex.ts";

interface AuditEventRow {
  id: number | string;
  actor_user_id: number | null;
  action: string;
  subject_type: string | null;
  subject_id: string | null;
  detail: string | Record<string, unknown> | null;
  occurred_at: Date;
}

export interface AuditEvent {
  id: number;
  actorUserId: number | null;
  action: string;
  subjectType: string | null;
  subjectId: string | null;
  detail: Record<string, unknown> | null;
  occurredAt: string;
}

export interface NewAuditEvent {
  actorUserId: number | null;
  action: string;
  subjectType?: string;
  subjectId?: string | number;
  detail?: Record<string, unknown>;
}

export async function recordAuditEvent(event: NewAuditEvent, conn: Knex = db()): Promise<void> {
  await conn("audit_events").insert({
    actor_user_id: event.actorUserId,
    action: event.action,
    subject_type: event.subjectType ?? null,
    subject_id: event.subjectId === undefined ? null : String(event.subjectId),
    detail: event.detail === undefined ? null : JSON.stringify(event.detail),
  });
}

function parseDetail(detail: AuditEventRow["detail"]): Record<string, unknown> | null {
  if (detail === null) return null;
  // MariaDB stores JSON as text, so mysql2 hands it back as a string.
  return typeof detail === "string" ? (JSON.parse(detail) as Record<string, unknown>) : detail;
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
  return rows.map((row) => ({
    id: Number(row.id),
    actorUserId: row.actor_user_id,
    action: row.action,
    subjectType: row.subject_type,
    subjectId: row.subject_id,
    detail: parseDetail(row.detail),
    occurredAt: new Date(row.occurred_at).toISOString(),
  }));
}
