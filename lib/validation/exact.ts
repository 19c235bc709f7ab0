import { z } from "zod";
import { wavefrontSchema } from "./wavefront.ts";

/** Body of `POST /models/{slug}/versions/{v}/exact`: one wavefront, propagated exactly on the version's setup. */
export const exactBodySchema = z.strictObject({ wavefront: wavefrontSchema });
export type ExactBody = z.output<typeof exactBodySchema>;
