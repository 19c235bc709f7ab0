import bcrypt from "bcryptjs";

const COST = 12;
let unknownUserHash: Promise<string> | undefined;

export function hashPassword(plain: string): Promise<string> {
  return bcrypt.hash(plain, COST);
}

/** When the account is unknown (hash null) a dummy hash is compared, so both answers take the same time. */
export async function verifyPassword(plain: string, hash: string | null): Promise<boolean> {
  unknownUserHash ??= bcrypt.hash("no such account", COST);
  const matches = await bcrypt.compare(plain, hash ?? (await unknownUserHash));
  return hash !== null && matches;
}
