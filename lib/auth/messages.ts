export const WRONG_CREDENTIALS_MESSAGE = "That e-mail address and password do not match an account. Check both and try again.";

/** Text shown on the sign-in page for an error code next-auth puts in the URL or returns. */
export function signInErrorMessage(code: string | null | undefined): string | null {
  if (!code) return null;
  if (code === "CredentialsSignin") return WRONG_CREDENTIALS_MESSAGE;
  return "Sign-in did not complete. Try again.";
}
