"use client";

import { useRouter } from "next/navigation";
import { useForm } from "react-hook-form";
import { describedBy, Field, FormError, inputClass, SubmitButton } from "@/components/forms/field";
import { errorAt, schemaResolver, useActionErrors } from "@/components/forms/use-action-form";
import { reviewBodySchema } from "@/lib/validation/registry";
import type { z } from "zod";
import { reviewVersionAction } from "./actions";

interface ReviewFormValues {
  decision: "approve" | "return";
  comment: string;
}

type ReviewBody = z.infer<typeof reviewBodySchema>;

const toInput = (values: ReviewFormValues): unknown => ({ decision: values.decision, comment: values.comment.trim() === "" ? null : values.comment });

/** A reviewer's decision on a version in review: approve (-> released) or return to draft with a comment. */
export function ReviewPanel({ slug, version }: { slug: string; version: number }) {
  const router = useRouter();
  const {
    register,
    handleSubmit,
    setError,
    watch,
    formState: { errors, isSubmitting },
  } = useForm<ReviewFormValues, unknown, ReviewBody>({
    resolver: schemaResolver(reviewBodySchema, toInput),
    defaultValues: { decision: "return", comment: "" },
  });
  const { formError, submit } = useActionErrors(setError);
  const decision = watch("decision");

  const onSubmit = handleSubmit(async (body) => {
    const data = await submit(() => reviewVersionAction(slug, version, body));
    if (data) router.refresh();
  });

  const commentError = errorAt(errors, "comment");
  return (
    <form onSubmit={onSubmit} noValidate className="flex max-w-3xl flex-col gap-3 rounded border border-line bg-surface p-3" aria-label="Review decision" data-testid="review-panel">
      <FormError message={formError} />
      <fieldset className="flex flex-col gap-1">
        <legend className="mb-1 text-sm font-medium">Decision</legend>
        <label className="flex items-baseline gap-2 text-sm">
          <input type="radio" value="approve" {...register("decision")} data-testid="decision-approve" />
          <span>Approve: release this version for evaluation by tokens</span>
        </label>
        <label className="flex items-baseline gap-2 text-sm">
          <input type="radio" value="return" {...register("decision")} data-testid="decision-return" />
          <span>Return to draft: the modeller changes what the comment asks and submits again</span>
        </label>
      </fieldset>
      <Field
        id="review-comment"
        label="Comment"
        hint={decision === "return" ? "Required: say what to change. It is mailed to the modeller and kept in the history." : "Optional; mailed to the modeller and kept in the history."}
        error={commentError}
      >
        <textarea rows={4} className={inputClass.replace(" font-mono", "")} {...describedBy("review-comment", commentError)} {...register("comment")} />
      </Field>
      <SubmitButton busy={isSubmitting} busyText="Recording…">
        {decision === "approve" ? "Approve and release" : "Return to draft"}
      </SubmitButton>
    </form>
  );
}
