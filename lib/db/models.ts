import type { Knex } from "knex";
import { assertCan, seesModel, type Actor } from "../access/actor.ts";
import { ConflictError, NotFoundError } from "../errors.ts";
import { toNollIndices } from "../optics/zernike.ts";
import type { OpticalSetup, ZernikeSet } from "../optics/types.ts";
import type { CreateModelInput, VersionState } from "../validation/registry.ts";
import { auditedBy, recordAuditEvent } from "./audit.ts";
import { db } from "./knex.ts";
import { fromJson, pageOf, toIso, type Page, type PageRequest } from "./rows.ts";
import { loadSetup, type SetupItem } from "./setups.ts";

interface ModelRow {
  id: number;
  slug: string;
  name: string;
  description: string | null;
  setup_id: number;
  zernike_ordering: "noll" | "ansi";
  zernike_indices: string | number[];
  created_at: Date;
  updated_at: Date;
}

export interface VersionLine {
  version: number;
  order: 1 | 2;
  state: VersionState;
  termCount: number;
}

/** A model as the API lists it (API.md "Setups and models"). */
export interface ModelItem {
  slug: string;
  name: string;
  description: string | null;
  setupId: number;
  zernike: ZernikeSet;
  versions: VersionLine[];
  latestReleasedVersion: number | null;
  createdAt: string;
  updatedAt: string;
}

export interface ModelDetail extends ModelItem {
  setup: SetupItem;
}

/** What the registry itself needs of a model: its id, setup and variables (no permission check). */
export interface ModelRecord {
  id: number;
  slug: string;
  name: string;
  setupId: number;
  setup: OpticalSetup;
  zernike: ZernikeSet;
  nollIndices: number[];
}

function zernikeOf(row: ModelRow): ZernikeSet {
  return { ordering: row.zernike_ordering, indices: fromJson<number[]>(row.zernike_indices) };
}

async function versionLines(modelIds: number[], conn: Knex): Promise<Map<number, VersionLine[]>> {
  const out = new Map<number, VersionLine[]>();
  if (modelIds.length === 0) return out;
  const rows: { model_id: number; version: number; order: number; state: VersionState; term_count: number }[] = await conn("model_versions")
    .select("model_id", "version", "order", "state", "term_count")
    .whereIn("model_id", modelIds)
    .orderBy("version");
  for (const row of rows) {
    const list = out.get(row.model_id) ?? [];
    list.push({ version: row.version, order: row.order as 1 | 2, state: row.state, termCount: row.term_count });
    out.set(row.model_id, list);
  }
  return out;
}

function toItem(row: ModelRow, versions: VersionLine[]): ModelItem {
  const released = versions.filter((v) => v.state === "released").map((v) => v.version);
  return {
    slug: row.slug,
    name: row.name,
    description: row.description,
    setupId: row.setup_id,
    zernike: zernikeOf(row),
    versions,
    latestReleasedVersion: released.length > 0 ? Math.max(...released) : null,
    createdAt: toIso(row.created_at)!,
    updatedAt: toIso(row.updated_at)!,
  };
}

export interface ModelFilter {
  q?: string;
  state?: VersionState;
  setupId?: number;
}

export async function listModels(actor: Actor, filter: ModelFilter, page: PageRequest, conn: Knex = db()): Promise<Page<ModelItem>> {
  assertCan(actor, "read");
  const query = conn("models").select("models.*");
  if (filter.q) {
    const like = `%${filter.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
    query.where((w) => w.where("models.slug", "like", like).orWhere("models.name", "like", like).orWhere("models.description", "like", like));
  }
  if (filter.setupId !== undefined) query.where("models.setup_id", filter.setupId);
  if (filter.state) {
    query.whereExists(conn("model_versions").select(conn.raw("1")).whereRaw("model_versions.model_id = models.id").where("model_versions.state", filter.state));
  }
  if (actor.via === "token" && actor.models !== null) query.whereIn("models.slug", [...actor.models]);
  const { rows, nextCursor } = await pageOf<ModelRow & Record<string, unknown>>(query, "models.id", page, (r) => r.id);
  const versions = await versionLines(rows.map((r) => r.id), conn);
  return { items: rows.map((row) => toItem(row, versions.get(row.id) ?? [])), nextCursor };
}

/** The registry's own view of a model (no permission check; callers have checked the actor). */
export async function loadModel(slug: string, conn: Knex = db()): Promise<ModelRecord | null> {
  const row: ModelRow | undefined = await conn("models").where({ slug }).first();
  if (!row) return null;
  const setup = await loadSetup(row.setup_id, conn);
  if (!setup) throw new Error(`model ${slug} refers to a missing setup ${row.setup_id}`);
  const zernike = zernikeOf(row);
  return { id: row.id, slug: row.slug, name: row.name, setupId: row.setup_id, setup: setup.setup, zernike, nollIndices: toNollIndices(zernike) };
}

/** @throws {NotFoundError} for an unknown model and for one the token may not see (no hint that it exists) */
export async function requireModel(actor: Actor, slug: string, conn: Knex = db()): Promise<ModelRecord> {
  const model = seesModel(actor, slug) ? await loadModel(slug, conn) : null;
  if (!model) throw new NotFoundError(`There is no model "${slug}".`);
  return model;
}

export async function getModel(actor: Actor, slug: string, conn: Knex = db()): Promise<ModelDetail> {
  assertCan(actor, "read", slug);
  const row: ModelRow | undefined = seesModel(actor, slug) ? await conn("models").where({ slug }).first() : undefined;
  if (!row) throw new NotFoundError(`There is no model "${slug}".`);
  const versions = await versionLines([row.id], conn);
  const setup = await loadSetup(row.setup_id, conn);
  return { ...toItem(row, versions.get(row.id) ?? []), setup: setup! };
}

export async function createModel(actor: Actor, input: CreateModelInput, conn: Knex = db()): Promise<ModelDetail> {
  assertCan(actor, "train", input.slug);
  await conn.transaction(async (trx) => {
    if (!(await loadSetup(input.setupId, trx))) throw new NotFoundError(`There is no setup ${input.setupId}.`);
    if (await trx("models").where({ slug: input.slug }).first()) {
      throw new ConflictError(`A model with the slug "${input.slug}" exists already.`);
    }
    const [id] = await trx("models").insert({
      slug: input.slug,
      name: input.name,
      description: input.description ?? null,
      setup_id: input.setupId,
      zernike_ordering: input.zernike.ordering,
      zernike_indices: JSON.stringify(input.zernike.indices),
      created_by: actor.userId,
    });
    await recordAuditEvent({ ...auditedBy(actor), action: "model.create", subjectType: "model", subjectId: id, detail: { slug: input.slug } }, trx);
  });
  return getModel({ ...actor, models: null }, input.slug, conn);
}

interface CatalogueRow {
  slug: string;
  name: string;
  zernike_ordering: string;
  zernike_indices: string | number[];
  setup_name: string;
  wavelength_nm: number;
  updated_at: Date;
}

/** One line of the model catalogue. */
export interface CatalogueEntry {
  slug: string;
  name: string;
  setupName: string;
  wavelengthNm: number;
  zernikeOrdering: string;
  zernikeTermCount: number;
  updatedAt: string;
}

export async function listCatalogue(conn: Knex = db()): Promise<CatalogueEntry[]> {
  const rows: CatalogueRow[] = await conn("models")
    .join("setups", "setups.id", "models.setup_id")
    .select("models.slug", "models.name", "models.zernike_ordering", "models.zernike_indices", "models.updated_at", "setups.name as setup_name", "setups.wavelength_nm")
    .orderBy("models.name");
  return rows.map((row) => ({
    slug: row.slug,
    name: row.name,
    setupName: row.setup_name,
    wavelengthNm: Number(row.wavelength_nm),
    zernikeOrdering: row.zernike_ordering,
    zernikeTermCount: fromJson<number[]>(row.zernike_indices).length,
    updatedAt: toIso(row.updated_at)!,
  }));
}
