import type { Knex } from "knex";
import { db } from "./knex";

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
    .select(
      "models.slug",
      "models.name",
      "models.zernike_ordering",
      "models.zernike_indices",
      "models.updated_at",
      "setups.name as setup_name",
      "setups.wavelength_nm",
    )
    .orderBy("models.name");
  return rows.map((row) => {
    const indices = typeof row.zernike_indices === "string" ? (JSON.parse(row.zernike_indices) as number[]) : row.zernike_indices;
    return {
      slug: row.slug,
      name: row.name,
      setupName: row.setup_name,
      wavelengthNm: Number(row.wavelength_nm),
      zernikeOrdering: row.zernike_ordering,
      zernikeTermCount: indices.length,
      updatedAt: new Date(row.updated_at).toISOString(),
    };
  });
}
