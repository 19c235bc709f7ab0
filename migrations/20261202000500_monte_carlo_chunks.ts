import type { Knex } from "knex";

// Monte Carlo runs store what each chunk of samples found (peaks histogram, worst samples) as run chunks of their own.
export async function up(knex: Knex): Promise<void> {
  await knex.raw("ALTER TABLE run_chunks MODIFY sample_set ENUM('generating', 'validation', 'monte-carlo') NOT NULL");
}

export async function down(knex: Knex): Promise<void> {
  await knex("run_chunks").where({ sample_set: "monte-carlo" }).delete();
  await knex.raw("ALTER TABLE run_chunks MODIFY sample_set ENUM('generating', 'validation') NOT NULL");
}
