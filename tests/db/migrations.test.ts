import type { Knex } from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { connectTo, testDatabaseName } from "../helpers/test-database";

// A database of its own, next to the run's test database, so the other tests keep their schema.
const scratchName = `${testDatabaseName()}_migrations`;
let admin: Knex;
let scratch: Knex;

async function tables(): Promise<string[]> {
  const [rows] = await scratch.raw("SHOW TABLES");
  return (rows as Record<string, string>[]).map((row) => Object.values(row)[0]!).sort();
}

const SCHEMA_TABLES = ["audit_events", "models", "setups", "user_roles", "users"];

beforeAll(async () => {
  admin = connectTo(testDatabaseName());
  await admin.raw(`DROP DATABASE IF EXISTS \`${scratchName}\``);
  await admin.raw(`CREATE DATABASE \`${scratchName}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`);
  scratch = connectTo(scratchName);
});

afterAll(async () => {
  await scratch?.destroy();
  await admin?.raw(`DROP DATABASE IF EXISTS \`${scratchName}\``);
  await admin?.destroy();
});

describe("migrations on an empty database", () => {
  it("run up to the latest schema", async () => {
    expect(await tables()).toEqual([]);
    const [, applied] = await scratch.migrate.latest();
    expect(applied.length).toBeGreaterThan(0);
    expect(await tables()).toEqual(expect.arrayContaining(SCHEMA_TABLES));
  });

  it("enforce the schema's rules: unique e-mail, known roles only, roles go with their person", async () => {
    const [id] = await scratch("users").insert({ email: "a@velora.test", name: "A", password_hash: "h" });
    await expect(scratch("users").insert({ email: "a@velora.test", name: "B", password_hash: "h" })).rejects.toThrow(
      /Duplicate entry/,
    );
    await scratch("user_roles").insert({ user_id: id, role: "reviewer" });
    await expect(scratch("user_roles").insert({ user_id: id, role: "superuser" })).rejects.toThrow();
    await scratch("users").where({ id }).delete();
    expect(await scratch("user_roles").count({ n: "*" })).toEqual([{ n: 0 }]);
  });

  it("roll all the way down, leaving only knex's own bookkeeping", async () => {
    await scratch.migrate.rollback(undefined, true);
    expect(await tables()).toEqual(["knex_migrations", "knex_migrations_lock"]);
    const [completed] = await scratch.migrate.list();
    expect(completed).toEqual([]);
  });

  it("run up again after the rollback", async () => {
    await scratch.migrate.latest();
    expect(await tables()).toEqual(expect.arrayContaining(SCHEMA_TABLES));
  });

  it("seed the demo accounts once: a second run leaves them as they are", async () => {
    // The demo model is trained by the suite's own seed (scripts/test.sh); training it again here adds nothing.
    process.env.SEED_DEMO_MODELS = "0";
    await scratch.seed.run();
    await scratch.seed.run();
    delete process.env.SEED_DEMO_MODELS;
    const rows = await scratch("users").select("email").orderBy("email");
    expect(rows.map((r) => r.email)).toEqual([
      "admin@velora.test",
      "modeller@velora.test",
      "reviewer@velora.test",
      "viewer@velora.test",
    ]);
    const roles = await scratch("user_roles")
      .join("users", "users.id", "user_roles.user_id")
      .where("users.email", "modeller@velora.test")
      .pluck("role");
    expect(roles.sort()).toEqual(["modeller", "viewer"]);
  });
});
