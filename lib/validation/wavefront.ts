import { z } from "zod";
import { nollCoefficients } from "../optics/wavefront.ts";
import type { Wavefront } from "../optics/types.ts";
import { coreCheck } from "./core.ts";
import { oneOrMany } from "./oneOrMany.ts";

/**
 * A wavefront (DESIGN.md "JSON shapes"): an ordering and coefficients in nm RMS keyed by index. Every rule
 * (ordering, valid index keys, finite values, no term given twice in two spellings) is the core's
 * `nollCoefficients`, with its messages ("coefficient of ANSI term 4 must be a finite number").
 */
export const wavefrontSchema = z
  .strictObject({
    ordering: z.enum(["noll", "ansi"], {
      error: (issue) => `Zernike ordering must be "noll" or "ansi", got ${JSON.stringify(issue.input)}`,
    }),
    coefficientsNm: z
      .record(z.string(), z.unknown(), { error: "wavefront coefficientsNm must be an object mapping indices to nm RMS" })
      .meta({
        description: "nm RMS of each term, keyed by its index in `ordering`",
        propertyNames: { pattern: "^[0-9]+$" },
        additionalProperties: { type: "number" },
      }),
  })
  .superRefine(coreCheck((wavefront) => nollCoefficients(wavefront as Wavefront)))
  .transform((wavefront) => wavefront as Wavefront);

/** `--wfe` files and the evaluation routes: one wavefront or a non-empty array of them. */
export const wavefrontInputSchema = oneOrMany(wavefrontSchema, "wavefront");
