import { z } from "zod";
import { toNollIndices } from "../optics/zernike.ts";
import type { ZernikeSet } from "../optics/types.ts";

/** Largest Zernike set a model may have (the second-order term count grows as J^2 / 2). */
export const MAX_ZERNIKE_TERMS = 120;

/**
 * A Zernike set (DESIGN.md "JSON shapes"): an ordering and its indices. The indices are checked by the core's own
 * conversion (`toNollIndices`), so the API, the CLI and the propagator agree on what a valid set is.
 */
export const zernikeSetSchema = z
  .strictObject({
    ordering: z.enum(["noll", "ansi"], { error: 'ordering must be "noll" or "ansi"' }),
    indices: z
      .array(z.number({ error: "indices must be integers" }).int("indices must be integers"))
      .min(1, "a Zernike set lists at least one term")
      .max(MAX_ZERNIKE_TERMS, `a Zernike set lists at most ${MAX_ZERNIKE_TERMS} terms`),
  })
  .superRefine((set, context) => {
    try {
      toNollIndices(set as ZernikeSet);
    } catch (error) {
      context.addIssue({ code: "custom", path: ["indices"], message: (error as Error).message });
    }
  });
export type ZernikeSetInput = z.infer<typeof zernikeSetSchema>;
