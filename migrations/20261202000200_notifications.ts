import type { Knex } from "knex";

// States are written out here, not imported, so this migration stays what it was when it ran.
const STATES = ["queued", "sent", "failed"];

// Every e-mail the product sends, one row per recipient: written with the event that causes it (in the same
// transaction), sent by a worker from the queue, retried until it goes out or its tries run out.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("notifications", (t) => {
    t.bigIncrements("id").primary();
    // What the mail is about (a version submitted, a decision, ...); a plain string so new kinds need no migration.
    t.string("kind", 40).notNullable();
    t.string("recipient", 254).notNullable();
    t.integer("recipient_user_id").unsigned().nullable().references("id").inTable("users").onDelete("SET NULL");
    t.string("subject", 250).notNullable();
    t.text("body").notNullable();
    // The version the mail is about, when there is one.
    t.integer("version_id").unsigned().nullable().references("id").inTable("model_versions").onDelete("SET NULL");
    t.enu("state", STATES).notNullable().defaultTo("queued");
    t.integer("attempts").unsigned().notNullable().defaultTo(0);
    t.string("last_error", 1000).nullable();
    t.string("message_id", 250).nullable();
    t.timestamp("created_at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
    t.timestamp("last_attempt_at", { precision: 3 }).nullable();
    t.timestamp("sent_at", { precision: 3 }).nullable();
    t.index(["state", "created_at"]);
    t.index(["version_id"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("notifications");
}
