export const ROLES = ["viewer", "modeller", "reviewer", "admin"] as const;
export type Role = (typeof ROLES)[number];

export function isRole(value: unknown): value is Role {
  return typeof value === "string" && (ROLES as readonly string[]).includes(value);
}

export function hasAnyRole(held: readonly Role[], wanted: readonly Role[]): boolean {
  return wanted.some((role) => held.includes(role));
}
