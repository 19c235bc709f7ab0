import type { Knex } from "knex";
import { countUsers, createUser } from "../lib/db/users";
import { hashPassword } from "../lib/auth/password";
import type { Role } from "../lib/access/roles";

/** The Velora demo team (DESIGN.md); the password is printed in README.md. */
export const DEMO_PASSWORD = "velora-demo-2026";

export const DEMO_ACCOUNTS: { email: string; name: string; roles: Role[] }[] = [
  { email: "modeller@velora.test", name: "Velora modeller", roles: ["viewer", "modeller"] },
  { email: "reviewer@velora.test", name: "Velora reviewer", roles: ["viewer", "reviewer"] },
  { email: "admin@velora.test", name: "Velora administrator", roles: ["viewer", "admin"] },
  { email: "viewer@velora.test", name: "Velora viewer", roles: ["viewer"] },
];

// Runs on every start; only an empty database receives the demo accounts.
export async function seed(knex: Knex): Promise<void> {
  if ((await countUsers(knex)) > 0) {
    console.log("seed: people already present, demo accounts left as they are");
    return;
  }
  const passwordHash = await hashPassword(DEMO_PASSWORD);
  for (const account of DEMO_ACCOUNTS) {
    await createUser({ ...account, passwordHash }, knex);
  }
  console.log(`seed: created ${DEMO_ACCOUNTS.length} demo accounts`);
}
