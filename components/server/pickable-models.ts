import type { Actor } from "@/lib/access/actor";
import { listModels } from "@/lib/db/models";
import { evaluatesVersionState } from "@/lib/db/versions";
import type { PickableModel } from "@/components/version-picker";

/** Every model with the versions the actor may evaluate (the playground's and the API page's pickers). */
export async function evaluableModels(actor: Actor): Promise<{ models: PickableModel[]; latestReleased: Map<string, number | null> }> {
  const page = await listModels(actor, {}, { limit: 500, cursor: null });
  const models = page.items
    .map((m) => ({
      slug: m.slug,
      name: m.name,
      versions: m.versions.filter((v) => evaluatesVersionState(actor, v.state)).map((v) => ({ version: v.version, state: v.state })),
    }))
    .filter((m) => m.versions.length > 0);
  return { models, latestReleased: new Map(page.items.map((m) => [m.slug, m.latestReleasedVersion])) };
}
