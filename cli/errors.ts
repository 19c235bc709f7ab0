/** An error whose message is meant for the user as it stands (bad flag, unreadable file). */
export class CliError extends Error {
  override name = "CliError";
}
