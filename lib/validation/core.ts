import { z } from "zod";

/**
 * A zod refinement that runs one of the numerical core's own checks and reports what it throws as one
 * issue with the core's message, so that a schema and the core never disagree on a rule or its wording.
 */
export function coreCheck<T>(check: (value: T) => unknown, path: PropertyKey[] = []) {
  return (value: T, context: z.RefinementCtx) => {
    try {
      check(value);
    } catch (error) {
      if (!(error instanceof RangeError || error instanceof TypeError)) throw error;
      // A fresh array each time: zod prefixes the path of an issue in place as it climbs out of arrays and objects.
      context.addIssue({ code: "custom", path: [...path], message: error.message });
    }
  };
}
