"use client";

import { zodResolver } from "@hookform/resolvers/zod";
import { useState } from "react";
import type { FieldPath, FieldValues, Resolver, UseFormSetError } from "react-hook-form";
import type { ZodType } from "zod";
import type { ActionResult } from "./action-result";

/**
 * A react-hook-form resolver that checks the form's values with a shared zod schema after `toInput` turns them into
 * the request (text of index lists into arrays, a date into an ISO time, ...). The field names of the form are the
 * schema's paths, so the schema's messages land beside the fields.
 */
export function schemaResolver<TValues extends FieldValues, TInput>(
  schema: ZodType<TInput>,
  toInput: (values: TValues) => unknown = (values) => values,
): Resolver<TValues, unknown, TInput> {
  const resolve = zodResolver(schema as never) as unknown as Resolver<FieldValues, unknown, TInput>;
  return (values, context, options) =>
    resolve(toInput(values) as FieldValues, context, options as never) as ReturnType<Resolver<TValues, unknown, TInput>>;
}

/**
 * The form-level message of a server action and the helper that puts the action's field messages beside the
 * fields (setError by dotted path).
 */
export function useActionErrors<TValues extends FieldValues>(setError: UseFormSetError<TValues>) {
  const [formError, setFormError] = useState<string | null>(null);
  function apply<T>(result: ActionResult<T>): result is { ok: true; data: T } {
    if (result.ok) {
      setFormError(null);
      return true;
    }
    setFormError(result.formError);
    for (const [path, message] of Object.entries(result.fieldErrors)) {
      setError(path as FieldPath<TValues>, { type: "server", message });
    }
    return false;
  }
  /** Calls a server action and applies its answer; a failure of the server itself becomes the form's message. */
  async function submit<T>(call: () => Promise<ActionResult<T>>): Promise<T | null> {
    try {
      const result = await call();
      return apply(result) ? result.data : null;
    } catch {
      setFormError("The server did not finish the request. Nothing was changed that you cannot see; try again in a moment.");
      return null;
    }
  }
  return { formError, setFormError, apply, submit };
}

/** The message of a nested field's error, by dotted path. */
export function errorAt(errors: unknown, path: string): string | undefined {
  let node = errors as Record<string, unknown> | undefined;
  for (const part of path.split(".")) {
    if (!node || typeof node !== "object") return undefined;
    node = node[part] as Record<string, unknown> | undefined;
  }
  const message = (node as { message?: unknown } | undefined)?.message;
  return typeof message === "string" ? message : undefined;
}
