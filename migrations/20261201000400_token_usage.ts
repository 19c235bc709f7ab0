import type { Knex } from "knex";

// Evaluations counted per token, version and day: who to tell when a version is retired.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("token_version_usage", (t) => {
    t.integer("token_id").unsigned().notNullable().references("id").inTable("api_tokens").onDelete("CASCADE");
    t.integer("version_id").unsigned().notNullable().references("id").inTable("model_versions").onDelete("CASCADE");
    t.date("day").notNullable();
    t.bigInteger("requests").unsigned().notNullable().defaultTo(0);
    t.bigInteger("wavefronts").unsigned().notNullable().defaultTo(0);
    t.timestamp("last_used_at", { precision: 3 }).notNullable();
    t.primary(["token_id", "version_id", "day"]);
    t.index(["version_id", "day"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("token_version_usage");
}
