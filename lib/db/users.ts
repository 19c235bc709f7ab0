import type { Knex } from "knex";
import { db } from "./knex";
import { isRole, ROLES, type Role } from "../access/roles";

interface UserRow {
  id: number;
  email: string;
  name: string;
  password_hash: string;
  created_at: Date;
  updated_at: Date;
}

/** A person as the rest of the app sees them: never carries the password hash. */
export interface UserSummary {
  id: number;
  email: string;
  name: string;
  roles: Role[];
  createdAt: string;
}

/** Only for checking a password at sign-in. */
export interface UserCredentials {
  id: number;
  email: string;
  passwordHash: string;
}

export function normaliseEmail(email: string): string {
  return email.trim().toLowerCase();
}

function sortRoles(roles: Role[]): Role[] {
  return [...roles].sort((a, b) => ROLES.indexOf(a) - ROLES.indexOf(b));
}

async function rolesByUser(userIds: number[], conn: Knex): Promise<Map<number, Role[]>> {
  const map = new Map<number, Role[]>();
  if (userIds.length === 0) return map;
  const rows: { user_id: number; role: string }[] = await conn("user_roles")
    .select("user_id", "role")
    .whereIn("user_id", userIds);
  for (const row of rows) {
    if (!isRole(row.role)) continue;
    const list = map.get(row.user_id) ?? [];
    list.push(row.role);
    map.set(row.user_id, list);
  }
  return map;
}

function toSummary(row: UserRow, roles: Role[]): UserSummary {
  return {
    id: row.id,
    email: row.email,
    name: row.name,
    roles: sortRoles(roles),
    createdAt: new Date(row.created_at).toISOString(),
  };
}

export async function findCredentialsByEmail(email: string, conn: Knex = db()): Promise<UserCredentials | null> {
  const row: UserRow | undefined = await conn<UserRow>("users").where({ email: normaliseEmail(email) }).first();
  return row ? { id: row.id, email: row.email, passwordHash: row.password_hash } : null;
}

export async function getUser(id: number, conn: Knex = db()): Promise<UserSummary | null> {
  const row: UserRow | undefined = await conn<UserRow>("users").where({ id }).first();
  if (!row) return null;
  const roles = await rolesByUser([id], conn);
  return toSummary(row, roles.get(id) ?? []);
}

export async function listUsers(conn: Knex = db()): Promise<UserSummary[]> {
  const rows: UserRow[] = await conn<UserRow>("users").select("*").orderBy("email");
  const roles = await rolesByUser(
    rows.map((r) => r.id),
    conn,
  );
  return rows.map((row) => toSummary(row, roles.get(row.id) ?? []));
}

export async function countUsers(conn: Knex = db()): Promise<number> {
  const result = await conn("users").count<{ n: number | string }[]>({ n: "*" });
  return Number(result[0]?.n ?? 0);
}

export interface NewUser {
  email: string;
  name: string;
  passwordHash: string;
  roles: Role[];
}

export async function createUser(user: NewUser, conn: Knex = db()): Promise<number> {
  return conn.transaction(async (trx) => {
    const [id] = await trx("users").insert({
      email: normaliseEmail(user.email),
      name: user.name,
      password_hash: user.passwordHash,
    });
    if (user.roles.length > 0) {
      await trx("user_roles").insert([...new Set(user.roles)].map((role) => ({ user_id: id, role })));
    }
    return Number(id);
  });
}

export async function updateUserName(userId: number, name: string, conn: Knex = db()): Promise<void> {
  await conn("users").where({ id: userId }).update({ name, updated_at: conn.fn.now(3) });
}

/** Everyone holding a role, by e-mail (the recipients of the mails meant for that role). */
export async function usersWithRole(role: Role, conn: Knex = db()): Promise<{ id: number; email: string }[]> {
  return conn("users").join("user_roles", "user_roles.user_id", "users.id").where("user_roles.role", role).select("users.id", "users.email").orderBy("users.email");
}
