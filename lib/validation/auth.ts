import { z } from "zod";

export const signInSchema = z.object({
  email: z.email("Enter an e-mail address.").max(254),
  password: z.string().min(1, "Enter your password.").max(200),
});
export type SignInInput = z.infer<typeof signInSchema>;

/** Only same-site paths may be used as the place to return to after sign-in. */
export function safeCallbackPath(value: unknown, fallback = "/"): string {
  if (typeof value !== "string" || !value.startsWith("/") || value.startsWith("//") || value.includes("\\")) {
    return fallback;
  }
  return value;
}
