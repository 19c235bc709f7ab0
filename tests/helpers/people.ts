import type { Role } from "@/lib/access/roles";
import { hashPassword } from "@/lib/auth/password";
import { createUser } from "@/lib/db/users";
import { DEMO_PASSWORD } from "@/seeds/01_demo_accounts";

let counter = 0;
/** A new account with the demo password and the given roles, named uniquely. */
export async function createTestPerson(roles: Role[], label = "person"): Promise<{ id: number; email: string }> {
  const email = `${label}-${process.pid}-${Date.now().toString(36)}-${counter++}@velora.test`;
  const id = await createUser({ email, name: `Test ${label}`, passwordHash: await hashPassword(DEMO_PASSWORD), roles });
  return { id, email };
}
