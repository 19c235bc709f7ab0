import type { Knex } from "knex";

// Role names are written out here, not imported, so this migration stays what it was when it ran.
const ROLES = ["viewer", "modeller", "reviewer", "admin"];

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("users", (t) => {
    t.increments("id").primary();
    t.string("email", 254).notNullable().unique();
    t.string("name", 120).notNullable();
    t.string("password_hash", 100).notNullable();
    t.timestamp("created_at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
    t.timestamp("updated_at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
  });

  await knex.schema.createTable("user_roles", (t) => {
    t.integer("user_id").unsigned().notNullable().references("id").inTable("users").onDelete("CASCADE");
    t.enu("role", ROLES).notNullable();
    t.timestamp("granted_at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
    t.primary(["user_id", "role"]);
  });

  await knex.schema.createTable("audit_events", (t) => {
    t.bigIncrements("id").primary();
    // Kept when the person is deleted: the record of what happened outlives the account.
    t.integer("actor_user_id").unsigned().nullable().references("id").inTable("users").onDelete("SET NULL");
    t.string("action", 64).notNullable();
    t.string("subject_type", 64).nullable();
    t.string("subject_id", 64).nullable();
    t.json("detail").nullable();
    t.timestamp("occurred_at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
    t.index(["actor_user_id", "occurred_at"]);
    t.index(["subject_type", "subject_id"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("audit_events");
  await knex.schema.dropTable("user_roles");
  await knex.schema.dropTable("users");
}
