import type { Knex } from "knex";

// The optical setup and the model family bound to it (DESIGN.md, "Domain model").
// Model versions, generating sets and training runs arrive with the features that create them.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("setups", (t) => {
    t.increments("id").primary();
    t.string("name", 120).notNullable().unique();
    t.double("wavelength_nm").notNullable();
    t.double("aperture_diameter_m").notNullable();
    t.double("beam_radius_m").notNullable();
    t.double("distance_m").notNullable();
    t.double("far_field_half_angle_nrad").notNullable();
    t.integer("far_field_points_per_axis").unsigned().notNullable();
    t.integer("pupil_samples").unsigned().notNullable();
    t.integer("created_by").unsigned().nullable().references("id").inTable("users").onDelete("SET NULL");
    t.timestamp("created_at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
  });

  await knex.schema.createTable("models", (t) => {
    t.increments("id").primary();
    t.string("slug", 80).notNullable().unique();
    t.string("name", 160).notNullable();
    t.text("description").nullable();
    t.integer("setup_id").unsigned().notNullable().references("id").inTable("setups").onDelete("RESTRICT");
    t.enu("zernike_ordering", ["noll", "ansi"]).notNullable();
    t.json("zernike_indices").notNullable();
    t.integer("created_by").unsigned().nullable().references("id").inTable("users").onDelete("SET NULL");
    t.timestamp("created_at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
    t.timestamp("updated_at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("models");
  await knex.schema.dropTable("setups");
}
