/** What a server action of a form answers: its result, or the messages to show in the form. */
export interface ActionFailure {
  ok: false;
  /** A message for the whole form (a refusal, a conflict), or null when the fields say it all. */
  formError: string | null;
  /** Messages by dotted field path ("setup.farField.pointsPerAxis"), shown beside the fields. */
  fieldErrors: Record<string, string>;
}

export type ActionResult<T = null> = { ok: true; data: T } | ActionFailure;
