import type { Knex } from "knex";

// Account safety: a disabled account signs nobody in and its tokens stop; the session epoch is written into every
// session token at sign-in and compared on each request, so raising it (password change, disabling) ends the
// sessions issued before.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("users", (t) => {
    t.timestamp("disabled_at", { precision: 3 }).nullable();
    t.integer("session_epoch").unsigned().notNullable().defaultTo(0);
    t.timestamp("password_changed_at", { precision: 3 }).nullable();
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("users", (t) => {
    t.dropColumn("password_changed_at");
    t.dropColumn("session_epoch");
    t.dropColumn("disabled_at");
  });
}
