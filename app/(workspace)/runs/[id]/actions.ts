"use server";

import { z } from "zod";
import type { ActionResult } from "@/components/forms/action-result";
import { actionActor, actionFailure } from "@/components/server/action";
import { cancelRun } from "@/lib/db/runs";

const runIdSchema = z.number({ error: "run id must be an integer" }).int().positive();

/** Cancel a queued or running run: its creator (a modeller) or an admin; cancelRun checks which. */
export async function cancelRunAction(id: unknown): Promise<ActionResult<{ state: string }>> {
  try {
    const actor = await actionActor("read");
    const run = await cancelRun(actor, runIdSchema.parse(id));
    return { ok: true, data: { state: run.state } };
  } catch (error) {
    return actionFailure(error);
  }
}
