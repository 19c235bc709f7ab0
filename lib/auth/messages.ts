export const WRONG_CREDENTIALS_MESSAGE = "That e-mail address and password do not match an account. Check both and try again.";

/** The error code a sign-in refused by the attempt limit carries (lib/auth/signInLimit.ts). */
export const SIGN_IN_RATE_LIMITED = "SignInRateLimited";
/** The window failed sign-ins are counted over, seconds. */
export const SIGN_IN_WINDOW_SECONDS = 15 * 60;
export const SIGN_IN_RATE_LIMITED_MESSAGE = `Too many failed sign-in attempts for this account or from this address. Wait ${SIGN_IN_WINDOW_SECONDS / 60} minutes and try again.`;

/**
 * The error code of a sign-in with the right password on a disabled account (only someone who knows the password
 * learns that the account exists and is disabled; a wrong password gets the usual refusal).
 */
export const ACCOUNT_DISABLED = "AccountDisabled";
export const ACCOUNT_DISABLED_MESSAGE = "This account has been disabled by an admin of the registry. Ask an admin to enable it again.";

/** Text shown on the sign-in page for an error code next-auth puts in the URL or returns. */
export function signInErrorMessage(code: string | null | undefined): string | null {
  if (!code) return null;
  if (code === "CredentialsSignin") return WRONG_CREDENTIALS_MESSAGE;
  if (code === SIGN_IN_RATE_LIMITED) return SIGN_IN_RATE_LIMITED_MESSAGE;
  if (code === ACCOUNT_DISABLED) return ACCOUNT_DISABLED_MESSAGE;
  return "Sign-in did not complete. Try again.";
}
