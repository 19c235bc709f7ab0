import type { Knex } from "knex";
import { assertCan, type Actor } from "../access/actor.ts";
import { ConflictError, NotFoundError } from "../errors.ts";
import { derivedQuantities } from "../optics/derived.ts";
import type { OpticalSetup } from "../optics/types.ts";
import type { CreateSetupInput } from "../validation/registry.ts";
import { auditedBy, recordAuditEvent } from "./audit.ts";
import { db } from "./knex.ts";
import { pageOf, toIso, type Page, type PageRequest } from "./rows.ts";

interface SetupRow {
  id: number;
  name: string;
  wavelength_nm: number;
  aperture_diameter_m: number;
  beam_radius_m: number;
  distance_m: number;
  far_field_half_angle_nrad: number;
  far_field_points_per_axis: number;
  pupil_samples: number;
  created_at: Date;
}

/** A setup as the API answers it (API.md "Setups and models"). */
export interface SetupItem {
  id: number;
  name: string;
  setup: OpticalSetup;
  derived: { diffractionAngleNrad: number; beamToApertureRatio: number; fresnelNumber: number; onAxisGain: number };
  createdAt: string;
}

export function setupFromRow(row: SetupRow): OpticalSetup {
  return {
    wavelengthNm: Number(row.wavelength_nm),
    apertureDiameterM: Number(row.aperture_diameter_m),
    beamRadiusM: Number(row.beam_radius_m),
    distanceM: Number(row.distance_m),
    farField: { halfAngleNrad: Number(row.far_field_half_angle_nrad), pointsPerAxis: Number(row.far_field_points_per_axis) },
    pupilSamples: Number(row.pupil_samples),
  };
}

function toItem(row: SetupRow): SetupItem {
  const setup = setupFromRow(row);
  const d = derivedQuantities(setup);
  return {
    id: row.id,
    name: row.name,
    setup,
    derived: {
      diffractionAngleNrad: d.diffractionAngleNrad,
      beamToApertureRatio: d.beamToApertureRatio,
      fresnelNumber: d.fresnelNumber,
      onAxisGain: d.onAxisGain,
    },
    createdAt: toIso(row.created_at)!,
  };
}

export async function listSetups(actor: Actor, page: PageRequest, conn: Knex = db()): Promise<Page<SetupItem>> {
  assertCan(actor, "read");
  const { rows, nextCursor } = await pageOf<SetupRow & Record<string, unknown>>(conn("setups").select("*"), "id", page, (r) => r.id);
  return { items: rows.map(toItem), nextCursor };
}

/** The stored setup (no permission check: for the registry's own use after the caller was checked). */
export async function loadSetup(id: number, conn: Knex = db()): Promise<SetupItem | null> {
  const row: SetupRow | undefined = await conn("setups").where({ id }).first();
  return row ? toItem(row) : null;
}

export async function getSetup(actor: Actor, id: number, conn: Knex = db()): Promise<SetupItem> {
  assertCan(actor, "read");
  const item = await loadSetup(id, conn);
  if (!item) throw new NotFoundError(`There is no setup ${id}.`);
  return item;
}

export async function createSetup(actor: Actor, input: CreateSetupInput, conn: Knex = db()): Promise<SetupItem> {
  assertCan(actor, "train");
  const { setup } = input;
  return conn.transaction(async (trx) => {
    if (await trx("setups").where({ name: input.name }).first()) {
      throw new ConflictError(`A setup named "${input.name}" exists already.`);
    }
    const [id] = await trx("setups").insert({
      name: input.name,
      wavelength_nm: setup.wavelengthNm,
      aperture_diameter_m: setup.apertureDiameterM,
      beam_radius_m: setup.beamRadiusM,
      distance_m: setup.distanceM,
      far_field_half_angle_nrad: setup.farField.halfAngleNrad,
      far_field_points_per_axis: setup.farField.pointsPerAxis,
      pupil_samples: setup.pupilSamples,
      created_by: actor.userId,
    });
    await recordAuditEvent({ ...auditedBy(actor), action: "setup.create", subjectType: "setup", subjectId: id, detail: { name: input.name } }, trx);
    return toItem((await trx("setups").where({ id }).first()) as SetupRow);
  });
}
