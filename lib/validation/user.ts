import { z } from "zod";
import { ROLES } from "../access/roles";

export const userNameSchema = z
  .string()
  .trim()
  .min(2, "A name needs at least 2 characters.")
  .max(120, "A name may have at most 120 characters.");

export const updateProfileSchema = z.object({ name: userNameSchema });
export type UpdateProfileInput = z.infer<typeof updateProfileSchema>;

/** What GET /api/v1/me answers. */
export const meSchema = z.object({
  id: z.number().int().positive(),
  email: z.string(),
  name: z.string(),
  roles: z.array(z.enum(ROLES)),
});
export type Me = z.infer<typeof meSchema>;
