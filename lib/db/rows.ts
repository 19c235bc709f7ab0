import type { Knex } from "knex";

/** MariaDB's JSON is LONGTEXT: mysql2 hands it back as a string. */
export function fromJson<T>(value: unknown): T {
  return (typeof value === "string" ? JSON.parse(value) : value) as T;
}

export function toIso(value: Date | string | null | undefined): string | null {
  return value == null ? null : new Date(value).toISOString();
}

/** A page of a list (API.md "Lists"). */
export interface Page<T> {
  items: T[];
  nextCursor: string | null;
}

export interface PageRequest {
  limit: number;
  cursor: string | null;
}

/** Cursors are opaque to clients: the last id seen, base64url-encoded. */
export function encodeCursor(lastId: number): string {
  return Buffer.from(`id:${lastId}`).toString("base64url");
}

/** @returns the id after which the page starts, or null for an unreadable cursor */
export function decodeCursor(cursor: string): number | null {
  const text = Buffer.from(cursor, "base64url").toString();
  const match = /^id:(\d{1,15})$/.exec(text);
  return match ? Number(match[1]) : null;
}

/**
 * One page of rows ordered by an increasing id column: asks for one row more than the limit to know whether
 * another page follows.
 */
export async function pageOf<R extends Record<string, unknown>>(
  query: Knex.QueryBuilder,
  idColumn: string,
  request: PageRequest,
  idOf: (row: R) => number,
): Promise<{ rows: R[]; nextCursor: string | null }> {
  if (request.cursor !== null) {
    const after = decodeCursor(request.cursor);
    query.where(idColumn, ">", after ?? Number.MAX_SAFE_INTEGER);
  }
  const rows: R[] = await query.orderBy(idColumn, "asc").limit(request.limit + 1);
  const more = rows.length > request.limit;
  const kept = more ? rows.slice(0, request.limit) : rows;
  return { rows: kept, nextCursor: more ? encodeCursor(idOf(kept[kept.length - 1])) : null };
}
