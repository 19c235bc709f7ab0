"use client";

import { useRouter } from "next/navigation";
import { useForm, useWatch } from "react-hook-form";
import { describedBy, Field, FormError, inputClass, selectClass, SubmitButton } from "@/components/forms/field";
import { parseIndexList } from "@/components/forms/index-list";
import { errorAt, schemaResolver, useActionErrors } from "@/components/forms/use-action-form";
import { fullTermCount } from "@/lib/surrogate/terms";
import { createModelSchema, type CreateModelInput } from "@/lib/validation/registry";
import { createModelAction } from "./actions";

interface ModelFormValues {
  slug: string;
  name: string;
  description: string;
  setupId: number;
  zernike: { ordering: "noll" | "ansi"; indices: string };
}

function toInput(values: ModelFormValues): unknown {
  const indices = parseIndexList(values.zernike.indices);
  return {
    ...values,
    description: values.description.trim() === "" ? null : values.description,
    // An unreadable list reaches the schema as a non-integer, so its own message ("indices must be integers") shows.
    zernike: { ordering: values.zernike.ordering, indices: indices ?? [Number.NaN] },
  };
}

const sans = inputClass.replace(" font-mono", "");

export function ModelForm({ setups, initialSetupId }: { setups: { id: number; name: string }[]; initialSetupId: number }) {
  const router = useRouter();
  const {
    register,
    handleSubmit,
    setError,
    control,
    formState: { errors, isSubmitting },
  } = useForm<ModelFormValues, unknown, CreateModelInput>({
    resolver: schemaResolver(createModelSchema, toInput),
    defaultValues: { slug: "", name: "", description: "", setupId: initialSetupId, zernike: { ordering: "noll", indices: "4-36" } },
    mode: "onTouched",
  });
  const { formError, submit } = useActionErrors(setError);
  const indicesText = useWatch({ control, name: "zernike.indices" });
  const ordering = useWatch({ control, name: "zernike.ordering" });
  const count = parseIndexList(indicesText ?? "")?.length ?? null;

  const onSubmit = handleSubmit(async (values) => {
    const data = await submit(() => createModelAction(values));
    if (data) router.push(data.next);
  });

  const e = (path: string) => errorAt(errors, path);
  return (
    <form onSubmit={onSubmit} noValidate className="flex max-w-xl flex-col gap-3" aria-label="New model">
      <FormError message={formError} />
      <div className="grid grid-cols-2 gap-3">
        <Field id="model-slug" label="Slug" hint="In URLs and tokens: lower-case words and hyphens." error={e("slug")}>
          <input className={inputClass} autoComplete="off" {...describedBy("model-slug", e("slug"))} {...register("slug")} />
        </Field>
        <Field id="model-name" label="Name" hint="As people read it in the catalogue." error={e("name")}>
          <input className={sans} {...describedBy("model-name", e("name"))} {...register("name")} />
        </Field>
      </div>
      <Field id="model-description" label="Description" hint="Optional: what the model is for, what it leaves out." error={e("description")}>
        <textarea rows={2} className={sans} {...describedBy("model-description", e("description"))} {...register("description")} />
      </Field>
      <Field id="model-setup" label="Optical setup" hint="Fixed for every version of the model." error={e("setupId")}>
        <select className={selectClass} {...describedBy("model-setup", e("setupId"))} {...register("setupId", { valueAsNumber: true })}>
          {setups.map((s) => (
            <option key={s.id} value={s.id}>
              {s.name}
            </option>
          ))}
        </select>
      </Field>
      <fieldset className="grid grid-cols-[10rem_1fr] gap-3 rounded border border-line bg-surface p-3">
        <legend className="px-1 text-xs font-medium uppercase tracking-wide text-muted">Zernike set</legend>
        <Field id="model-ordering" label="Index ordering" error={e("zernike.ordering")} hint="Noll from 1, ANSI from 0.">
          <select className={selectClass} {...describedBy("model-ordering", e("zernike.ordering"))} {...register("zernike.ordering")}>
            <option value="noll">Noll (1976)</option>
            <option value="ansi">ANSI Z80.28</option>
          </select>
        </Field>
        <Field
          id="model-indices"
          label="Indices"
          error={e("zernike.indices")}
          hint={
            count === null
              ? "Ranges and lists: 4-36, or 4, 5, 6."
              : `${count} terms: ${fullTermCount(count, 1)} coefficients per node at first order, ${fullTermCount(count, 2)} at second order.`
          }
        >
          <input
            className={inputClass}
            autoComplete="off"
            placeholder={ordering === "ansi" ? "3-35" : "4-36"}
            {...describedBy("model-indices", e("zernike.indices"))}
            {...register("zernike.indices")}
          />
        </Field>
      </fieldset>
      <SubmitButton busy={isSubmitting} busyText="Saving…">
        Save model
      </SubmitButton>
    </form>
  );
}
