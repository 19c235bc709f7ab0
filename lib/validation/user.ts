import { z } from "zod";

export const userNameSchema = z
  .string()
  .trim()
  .min(2, "A name needs at least 2 characters.")
  .max(120, "A name may have at most 120 characters.");

export const updateProfileSchema = z.object({ name: userNameSchema });
export type UpdateProfileInput = z.infer<typeof updateProfileSchema>;
