"use client";

import { useRouter } from "next/navigation";
import { useState } from "react";
import { useForm } from "react-hook-form";
import { describedBy, Field, FormError, inputClass, selectClass, SubmitButton } from "@/components/forms/field";
import { errorAt, schemaResolver, useActionErrors } from "@/components/forms/use-action-form";
import { retireBodySchema } from "@/lib/validation/registry";
import type { z } from "zod";
import { retireVersionAction } from "./actions";

interface RetireFormValues {
  reason: string;
  /** yyyy-mm-dd; the sunset is 00:00 UTC that day. */
  sunsetAt: string;
  /** A version number, or "" for none. */
  successorVersion: string;
}

type RetireInput = z.infer<typeof retireBodySchema>;

function toInput(values: RetireFormValues): unknown {
  return {
    reason: values.reason,
    sunsetAt: values.sunsetAt === "" ? "" : `${values.sunsetAt}T00:00:00Z`,
    successorVersion: values.successorVersion === "" ? null : Number(values.successorVersion),
  };
}

/** The retirement of one released version: asks first, then takes reason, sunset and successor. */
export function RetireForm({
  slug,
  version,
  successors,
  defaultSunset,
  audience,
}: {
  slug: string;
  version: number;
  successors: { version: number; state: string }[];
  defaultSunset: string;
  audience: string;
}) {
  const router = useRouter();
  const [open, setOpen] = useState(false);
  const [done, setDone] = useState<number | null>(null);
  const id = `retire-${slug}-${version}`;
  const released = successors.find((s) => s.state === "released");
  const {
    register,
    handleSubmit,
    setError,
    formState: { errors, isSubmitting },
  } = useForm<RetireFormValues, unknown, RetireInput>({
    resolver: schemaResolver(retireBodySchema, toInput),
    defaultValues: { reason: "", sunsetAt: defaultSunset, successorVersion: released ? String(released.version) : "" },
  });
  const { formError, submit } = useActionErrors(setError);

  const onSubmit = handleSubmit(async (values) => {
    const data = await submit(() => retireVersionAction(slug, version, values));
    if (data) {
      setDone(data.notices);
      // The version leaves the live list: show it among the retired ones, with what was queued beside it.
      router.replace(`/versions?view=retired&retired=${encodeURIComponent(`${slug}/${version}`)}&notices=${data.notices}`);
    }
  });

  if (done !== null) return <RetiredStatus notices={done} />;
  if (!open) {
    return (
      <button type="button" onClick={() => setOpen(true)} className="rounded border border-line px-2 py-0.5 text-xs hover:bg-sunken" aria-label={`Retire ${slug} version ${version}…`}>
        Retire…
      </button>
    );
  }
  const e = (path: string) => errorAt(errors, path);
  return (
    <form onSubmit={onSubmit} noValidate className="flex w-72 flex-col gap-2" aria-label={`Retire ${slug} version ${version}`}>
      <FormError message={formError} />
      <Field id={`${id}-reason`} label="Reason" hint="Shown on the version page and in the notices." error={e("reason")}>
        <textarea rows={2} className={inputClass.replace(" font-mono", "")} {...describedBy(`${id}-reason`, e("reason"))} {...register("reason")} />
      </Field>
      <Field id={`${id}-sunset`} label="Sunset" hint="Evaluation ends at 00:00 UTC that day; after it, requests are answered 410 Gone." error={e("sunsetAt")}>
        <input type="date" className={inputClass} {...describedBy(`${id}-sunset`, e("sunsetAt"))} {...register("sunsetAt")} />
      </Field>
      <Field id={`${id}-successor`} label="Successor" error={e("successorVersion")} hint="Named in the notices and on the version page.">
        <select className={selectClass} {...describedBy(`${id}-successor`, e("successorVersion"))} {...register("successorVersion")}>
          <option value="">none</option>
          {successors.map((s) => (
            <option key={s.version} value={s.version}>
              version {s.version} ({s.state})
            </option>
          ))}
        </select>
      </Field>
      <p className="text-xs text-muted">{audience}</p>
      <div className="flex gap-2">
        <SubmitButton busy={isSubmitting} busyText="Retiring…">
          Retire version {version}
        </SubmitButton>
        <button type="button" onClick={() => setOpen(false)} disabled={isSubmitting} className="rounded border border-line px-3 py-1.5 text-sm hover:bg-sunken">
          Cancel
        </button>
      </div>
    </form>
  );
}

/** What a retirement queued, beside the version it retired (in the form, then on the retired list it moves to). */
export function RetiredStatus({ notices }: { notices: number }) {
  return (
    <p role="status" className="text-xs text-good">
      Retired; {notices === 1 ? "1 notice" : `${notices} notices`} queued.
    </p>
  );
}
