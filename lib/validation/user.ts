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

const rolesSchema = z
  .array(z.enum(ROLES, { error: `roles may be ${ROLES.join(", ")}` }))
  .min(1, "Give at least one role (to shut an account, disable it).")
  .refine((r) => new Set(r).size === r.length, "A role is listed twice.");

/** An admin invites a person by e-mail with the roles the account will hold. */
export const inviteSchema = z.strictObject({
  email: z.email("Enter an e-mail address.").max(254, "An e-mail address may have at most 254 characters."),
  roles: rolesSchema,
});
export type InviteInput = z.infer<typeof inviteSchema>;

/** The invited person sets their name and password. */
export const acceptInvitationSchema = z
  .strictObject({ name: userNameSchema, password: newPasswordSchema, confirm: z.string() })
  .refine((v) => v.password === v.confirm, { path: ["confirm"], message: "The two passwords differ." });
export type AcceptInvitationInput = z.infer<typeof acceptInvitationSchema>;

/** An admin sets a person's roles. */
export const setRolesSchema = z.strictObject({
  userId: z.number({ error: "userId must be an integer" }).int().positive(),
  roles: rolesSchema,
});
export type SetRolesInput = z.infer<typeof setRolesSchema>;
