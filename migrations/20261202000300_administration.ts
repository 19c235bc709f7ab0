import type { Knex } from "knex";

// Administration: invitations by e-mail (only the SHA-256 of the one-time secret is stored; a link expires and is
// used once) and where each audited action came from.
// Role names are written out here, not imported, so this migration stays what it was when it ran.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("invitations", (t) => {
    t.increments("id").primary();
    t.string("email", 254).notNullable();
    t.json("roles").notNullable();
    t.specificType("secret_sha256", "char(64)").notNullable().unique();
    t.integer("invited_by").unsigned().nullable().references("id").inTable("users").onDelete("SET NULL");
    t.timestamp("created_at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
    t.timestamp("expires_at", { precision: 3 }).notNullable();
    t.timestamp("accepted_at", { precision: 3 }).nullable();
    t.integer("accepted_user_id").unsigned().nullable().references("id").inTable("users").onDelete("SET NULL");
    t.timestamp("withdrawn_at", { precision: 3 }).nullable();
    t.index(["email"]);
  });

  await knex.schema.alterTable("audit_events", (t) => {
    // An IPv6 address in text is at most 45 characters.
    t.string("client_address", 45).nullable();
    t.index(["action", "occurred_at"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("audit_events", (t) => {
    t.dropIndex(["action", "occurred_at"]);
    t.dropColumn("client_address");
  });
  await knex.schema.dropTable("invitations");
}
