import { z } from "zod";
import { ROLES } from "../access/roles";

export const userNameSchema = z
  .string()
  .trim()
  .min(2, "A name needs at least 2 characters.")
  .max(120, "A name may have at most 120 characters.");

/**
 * A new password: 12 characters at least (common practice, no source: long passphrases over composition rules, as
 * NIST SP 800-63B advises against composition rules), 72 bytes at most because bcrypt reads no further.
 */
export const newPasswordSchema = z
  .string()
  .min(12, "A password needs at least 12 characters.")
  .refine((value) => new TextEncoder().encode(value).length <= 72, "A password may have at most 72 bytes (bcrypt reads no further).");

export const changePasswordSchema = z
  .object({
    currentPassword: z.string().min(1, "Enter your current password.").max(200),
    newPassword: newPasswordSchema,
    confirmPassword: z.string(),
  })
  .refine((value) => value.newPassword === value.confirmPassword, { path: ["confirmPassword"], message: "The two new passwords differ." })
  .refine((value) => value.newPassword !== value.currentPassword, { path: ["newPassword"], message: "The new password is the current one." });
export type ChangePasswordInput = z.infer<typeof changePasswordSchema>;

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
