import type { Knex } from "knex";

// The registry (DESIGN.md "Domain model"): model versions with their state history and coefficient blobs,
// generating sets, training runs with their log and computed chunks, reviews and API tokens.
// Enumerations are written out here, not imported, so this migration stays what it was when it ran.
const VERSION_STATES = ["draft", "in-review", "released", "retired"];
const RUN_KINDS = ["training", "pruning", "monte-carlo"];
const RUN_STATES = ["queued", "running", "succeeded", "failed", "cancelled"];

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("model_versions", (t) => {
    t.increments("id").primary();
    t.integer("model_id").unsigned().notNullable().references("id").inTable("models").onDelete("RESTRICT");
    t.integer("version").unsigned().notNullable();
    t.enu("state", VERSION_STATES).notNullable().defaultTo("draft");
    t.tinyint("order").unsigned().notNullable();
    t.integer("term_count").unsigned().notNullable();
    // The exact term list, by Noll indices ([] constant, [i] linear, [i, j] product).
    t.json("terms").notNullable();
    t.json("validity").notNullable();
    t.json("statistics").nullable();
    t.json("provenance").notNullable();
    t.json("fit").notNullable();
    t.json("pruning").nullable();
    t.specificType("coefficients_sha256", "char(64)").notNullable();
    t.string("software_version", 80).notNullable();
    t.integer("parent_version_id").unsigned().nullable().references("id").inTable("model_versions").onDelete("RESTRICT");
    t.bigInteger("run_id").unsigned().nullable();
    t.integer("created_by").unsigned().nullable().references("id").inTable("users").onDelete("SET NULL");
    t.timestamp("created_at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
    t.text("retired_reason").nullable();
    t.timestamp("retired_at", { precision: 3 }).nullable();
    t.timestamp("sunset_at", { precision: 3 }).nullable();
    t.integer("successor_version_id").unsigned().nullable().references("id").inTable("model_versions").onDelete("RESTRICT");
    t.unique(["model_id", "version"]);
    t.index(["state"]);
  });

  await knex.schema.createTable("version_blobs", (t) => {
    t.integer("version_id").unsigned().primary().references("id").inTable("model_versions").onDelete("RESTRICT");
    t.specificType("bytes", "longblob").notNullable();
    t.bigInteger("size_bytes").unsigned().notNullable();
    t.specificType("sha256", "char(64)").notNullable();
    t.timestamp("created_at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
  });

  await knex.schema.createTable("version_state_events", (t) => {
    t.bigIncrements("id").primary();
    t.integer("version_id").unsigned().notNullable().references("id").inTable("model_versions").onDelete("CASCADE");
    t.enu("state", VERSION_STATES).notNullable();
    t.integer("by_user_id").unsigned().nullable().references("id").inTable("users").onDelete("SET NULL");
    t.text("comment").nullable();
    t.timestamp("at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
    t.index(["version_id", "at"]);
  });

  await knex.schema.createTable("reviews", (t) => {
    t.bigIncrements("id").primary();
    t.integer("version_id").unsigned().notNullable().references("id").inTable("model_versions").onDelete("CASCADE");
    t.integer("reviewer_id").unsigned().nullable().references("id").inTable("users").onDelete("SET NULL");
    t.enu("decision", ["approve", "return"]).notNullable();
    t.text("comment").nullable();
    t.timestamp("created_at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
    t.index(["version_id", "created_at"]);
  });

  await knex.schema.createTable("generating_sets", (t) => {
    t.increments("id").primary();
    t.integer("model_id").unsigned().notNullable().references("id").inTable("models").onDelete("RESTRICT");
    t.integer("samples").unsigned().notNullable();
    // SHA-256 of the uploaded file, as received.
    t.specificType("sha256", "char(64)").notNullable();
    t.string("file_name", 255).nullable();
    t.bigInteger("file_size_bytes").unsigned().notNullable();
    // The set in the model's Noll order: coefficients, x maps, y maps as float64 little-endian, zlib-compressed.
    t.specificType("data", "longblob").notNullable();
    t.specificType("data_sha256", "char(64)").notNullable();
    t.integer("created_by").unsigned().nullable().references("id").inTable("users").onDelete("SET NULL");
    t.timestamp("created_at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
    t.index(["model_id"]);
  });

  await knex.schema.createTable("runs", (t) => {
    t.bigIncrements("id").primary();
    t.enu("kind", RUN_KINDS).notNullable();
    t.integer("model_id").unsigned().notNullable().references("id").inTable("models").onDelete("RESTRICT");
    t.integer("source_version_id").unsigned().nullable().references("id").inTable("model_versions").onDelete("RESTRICT");
    t.enu("state", RUN_STATES).notNullable().defaultTo("queued");
    t.json("spec").notNullable();
    t.integer("progress_done").unsigned().notNullable().defaultTo(0);
    t.integer("progress_total").unsigned().notNullable().defaultTo(0);
    t.integer("version_id").unsigned().nullable().references("id").inTable("model_versions").onDelete("RESTRICT");
    t.json("result").nullable();
    t.text("error").nullable();
    t.string("worker", 200).nullable();
    t.integer("created_by").unsigned().nullable().references("id").inTable("users").onDelete("SET NULL");
    t.timestamp("created_at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
    t.timestamp("started_at", { precision: 3 }).nullable();
    t.timestamp("finished_at", { precision: 3 }).nullable();
    t.index(["model_id", "created_at"]);
    t.index(["state"]);
  });

  await knex.schema.createTable("run_log", (t) => {
    t.bigIncrements("id").primary();
    t.bigInteger("run_id").unsigned().notNullable().references("id").inTable("runs").onDelete("CASCADE");
    t.enu("level", ["info", "warning", "error"]).notNullable().defaultTo("info");
    t.text("message").notNullable();
    t.string("worker", 200).nullable();
    t.timestamp("at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
    t.index(["run_id", "id"]);
  });

  // Exact maps computed for a run, one row per chunk of samples; written idempotently (a retried chunk writes the
  // same bytes) and deleted when the run ends.
  await knex.schema.createTable("run_chunks", (t) => {
    t.bigInteger("run_id").unsigned().notNullable().references("id").inTable("runs").onDelete("CASCADE");
    t.enu("sample_set", ["generating", "validation"]).notNullable();
    t.integer("chunk_index").unsigned().notNullable();
    t.integer("first_sample").unsigned().notNullable();
    t.integer("sample_count").unsigned().notNullable();
    t.specificType("maps", "longblob").notNullable();
    t.string("worker", 200).nullable();
    t.timestamp("created_at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
    t.primary(["run_id", "sample_set", "chunk_index"]);
  });

  await knex.schema.createTable("api_tokens", (t) => {
    t.increments("id").primary();
    t.integer("user_id").unsigned().notNullable().references("id").inTable("users").onDelete("CASCADE");
    t.string("name", 80).notNullable();
    // SHA-256 of the secret; the secret itself is never stored.
    t.specificType("secret_sha256", "char(64)").notNullable().unique();
    // The first characters of the secret, so that a person can tell their tokens apart.
    t.string("secret_hint", 16).notNullable();
    t.json("scopes").notNullable();
    t.json("models").nullable();
    t.timestamp("expires_at", { precision: 3 }).nullable();
    t.timestamp("created_at", { precision: 3 }).notNullable().defaultTo(knex.fn.now(3));
    t.timestamp("last_used_at", { precision: 3 }).nullable();
    t.bigInteger("use_count").unsigned().notNullable().defaultTo(0);
    t.timestamp("revoked_at", { precision: 3 }).nullable();
    t.index(["user_id"]);
  });

  // Released coefficients never change or vanish: enforced here, not only in code.
  await knex.raw(`
    CREATE TRIGGER model_versions_frozen_update BEFORE UPDATE ON model_versions FOR EACH ROW
    BEGIN
      IF OLD.state <> 'draft' AND (
        NOT (NEW.coefficients_sha256 <=> OLD.coefficients_sha256) OR NOT (NEW.terms <=> OLD.terms)
        OR NOT (NEW.\`order\` <=> OLD.\`order\`) OR NOT (NEW.term_count <=> OLD.term_count)
        OR NOT (NEW.model_id <=> OLD.model_id) OR NOT (NEW.version <=> OLD.version)
      ) THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'the coefficients and terms of a version that has left draft cannot change';
      END IF;
    END`);
  await knex.raw(`
    CREATE TRIGGER model_versions_frozen_delete BEFORE DELETE ON model_versions FOR EACH ROW
    BEGIN
      IF OLD.state <> 'draft' THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'a version that has left draft cannot be deleted';
      END IF;
    END`);
  await knex.raw(`
    CREATE TRIGGER version_blobs_frozen_update BEFORE UPDATE ON version_blobs FOR EACH ROW
    BEGIN
      IF (SELECT state FROM model_versions WHERE id = OLD.version_id) <> 'draft' THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'the coefficient blob of a version that has left draft cannot change';
      END IF;
    END`);
  await knex.raw(`
    CREATE TRIGGER version_blobs_frozen_delete BEFORE DELETE ON version_blobs FOR EACH ROW
    BEGIN
      IF (SELECT state FROM model_versions WHERE id = OLD.version_id) <> 'draft' THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'the coefficient blob of a version that has left draft cannot be deleted';
      END IF;
    END`);
}

export async function down(knex: Knex): Promise<void> {
  for (const trigger of ["version_blobs_frozen_delete", "version_blobs_frozen_update", "model_versions_frozen_delete", "model_versions_frozen_update"]) {
    await knex.raw(`DROP TRIGGER IF EXISTS ${trigger}`);
  }
  await knex.schema.dropTable("api_tokens");
  await knex.schema.dropTable("run_chunks");
  await knex.schema.dropTable("run_log");
  // model_versions.run_id is a plain column (no foreign key) so that runs and versions can refer to each other.
  await knex.schema.dropTable("runs");
  await knex.schema.dropTable("generating_sets");
  await knex.schema.dropTable("reviews");
  await knex.schema.dropTable("version_state_events");
  await knex.schema.dropTable("version_blobs");
  await knex.schema.alterTable("model_versions", (t) => {
    t.dropForeign(["parent_version_id"]);
    t.dropForeign(["successor_version_id"]);
  });
  await knex.schema.dropTable("model_versions");
}
