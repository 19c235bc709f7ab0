import type { Knex } from "knex";
import { seedDemoModels } from "../lib/registry/demo";

// Runs on every start after the accounts; the demo model is trained (about 15 s on 2 cores) only when it is missing.
// SEED_DEMO_MODELS=0 leaves it out (for test databases that do not need it).
export async function seed(knex: Knex): Promise<void> {
  if (process.env.SEED_DEMO_MODELS === "0") {
    console.log("seed: demo models skipped (SEED_DEMO_MODELS=0)");
    return;
  }
  const began = Date.now();
  const created = await seedDemoModels(knex, (line) => console.log(`seed: ${line}`));
  console.log(created ? `seed: demo models ready in ${((Date.now() - began) / 1000).toFixed(1)} s` : "seed: demo model already present, left as it is");
}
