"use client";

import { useRouter } from "next/navigation";
import { useEffect } from "react";
import { useForm, useWatch } from "react-hook-form";
import { describedBy, Field, FormError, inputClass, selectClass, SubmitButton } from "@/components/forms/field";
import { errorAt, schemaResolver, useActionErrors } from "@/components/forms/use-action-form";
import { CHUNK_SAMPLES } from "@/lib/queue/plan";
import { axesAndPairsSize, axesAndPairsStepNm } from "@/lib/surrogate/designs";
import { fullTermCount } from "@/lib/surrogate/terms";
import { versionTrainingSchema, type VersionTrainingInput } from "@/lib/validation/training";
import { queueTrainingAction } from "./actions";

type Design = "random" | "axes-and-pairs" | "uploaded";
type ValidationMode = "random" | "uploaded" | "none";

interface TrainingFormValues {
  order: 1 | 2;
  generatingSet: { design: Design; size: number; maxRmsNm: number; seed: number; stepNm: number; generatingSetId: number };
  validationMode: ValidationMode;
  validationSet: { size: number; maxRmsNm: number; seed: number; generatingSetId: number };
}

/** The request the form stands for: only the fields of the chosen design (the schema refuses any other). */
function toInput(values: TrainingFormValues): unknown {
  const g = values.generatingSet;
  const v = values.validationSet;
  const generatingSet =
    g.design === "random"
      ? { design: "random", size: g.size, maxRmsNm: g.maxRmsNm, seed: g.seed }
      : g.design === "axes-and-pairs"
        ? { design: "axes-and-pairs", stepNm: g.stepNm }
        : { design: "uploaded", generatingSetId: g.generatingSetId };
  const validationSet =
    values.validationMode === "none"
      ? null
      : values.validationMode === "random"
        ? { size: v.size, maxRmsNm: v.maxRmsNm, seed: v.seed }
        : { design: "uploaded", generatingSetId: v.generatingSetId };
  return { order: values.order, generatingSet, validationSet };
}

export function TrainingForm({
  slug,
  termCountJ,
  generatingSets,
}: {
  slug: string;
  termCountJ: number;
  generatingSets: { id: number; label: string; samples: number }[];
}) {
  const router = useRouter();
  const suggestedSize = Math.ceil((2 * fullTermCount(termCountJ, 2)) / 10) * 10;
  const {
    register,
    handleSubmit,
    setError,
    setValue,
    getValues,
    control,
    formState: { errors, isSubmitting },
  } = useForm<TrainingFormValues, unknown, VersionTrainingInput>({
    resolver: schemaResolver(versionTrainingSchema, toInput),
    defaultValues: {
      order: 2,
      generatingSet: {
        design: "random",
        size: suggestedSize,
        maxRmsNm: 35,
        seed: 7,
        stepNm: Number(axesAndPairsStepNm(35).toFixed(2)),
        generatingSetId: generatingSets[generatingSets.length - 1]?.id ?? Number.NaN,
      },
      validationMode: "random",
      validationSet: { size: 200, maxRmsNm: 35, seed: 8, generatingSetId: generatingSets[0]?.id ?? Number.NaN },
    },
    mode: "onTouched",
  });
  const { formError, submit } = useActionErrors(setError);
  // A set uploaded beside the form arrives with the refreshed props: choose it where nothing was chosen yet.
  const newestSetId = generatingSets[generatingSets.length - 1]?.id;
  useEffect(() => {
    if (newestSetId === undefined) return;
    for (const path of ["generatingSet.generatingSetId", "validationSet.generatingSetId"] as const) {
      if (!Number.isInteger(getValues(path))) setValue(path, newestSetId);
    }
  }, [newestSetId, getValues, setValue]);
  const [order, design, size, setId, validationMode, validationSize] = useWatch({
    control,
    name: ["order", "generatingSet.design", "generatingSet.size", "generatingSet.generatingSetId", "validationMode", "validationSet.size"],
  });

  const onSubmit = handleSubmit(async (values) => {
    const data = await submit(() => queueTrainingAction(slug, values));
    if (data) router.push(data.next);
  });

  const terms = fullTermCount(termCountJ, Number(order) === 1 ? 1 : 2);
  const samples =
    design === "random" ? size : design === "axes-and-pairs" ? axesAndPairsSize(termCountJ) : (generatingSets.find((s) => s.id === Number(setId))?.samples ?? 0);
  const exactMaps = (design === "uploaded" ? 0 : samples || 0) + (validationMode === "random" ? validationSize || 0 : 0);
  const e = (path: string) => errorAt(errors, path);
  const numberInput = (id: string, path: string, step = "any") => (
    <input
      type="number"
      inputMode="decimal"
      step={step}
      className={inputClass}
      {...describedBy(id, e(path))}
      {...register(path as "order", { valueAsNumber: true })}
    />
  );

  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-3" aria-label="Training request">
      <FormError message={formError} />
      <Field
        id="train-order"
        label="Order"
        error={e("order")}
        hint={`${terms} coefficients per node and axis; the generating set needs at least ${terms} samples.`}
      >
        <select className={selectClass} {...describedBy("train-order", e("order"))} {...register("order", { valueAsNumber: true })}>
          <option value={2}>second order (constant, linear and products)</option>
          <option value={1}>first order (constant and linear)</option>
        </select>
      </Field>

      <fieldset className="flex flex-col gap-3 rounded border border-line bg-surface p-3">
        <legend className="px-1 text-xs font-medium uppercase tracking-wide text-muted">Generating set</legend>
        <Field id="train-design" label="Design" error={e("generatingSet.design")}>
          <select className={selectClass} {...describedBy("train-design", e("generatingSet.design"), false)} {...register("generatingSet.design")}>
            <option value="random">random, uniform in the RMS ball (seeded)</option>
            <option value="axes-and-pairs">axes and pairs (exactly determined at second order)</option>
            <option value="uploaded">uploaded set (computed elsewhere)</option>
          </select>
        </Field>
        {design === "random" && (
          <div className="grid grid-cols-3 gap-3">
            <Field id="train-size" label="Samples" error={e("generatingSet.size")} hint={`suggested ${suggestedSize}`}>
              {numberInput("train-size", "generatingSet.size", "1")}
            </Field>
            <Field id="train-max-rms" label="Up to" unit="nm RMS" error={e("generatingSet.maxRmsNm")} hint="largest total WFE">
              {numberInput("train-max-rms", "generatingSet.maxRmsNm")}
            </Field>
            <Field id="train-seed" label="Seed" error={e("generatingSet.seed")} hint="same seed, same set">
              {numberInput("train-seed", "generatingSet.seed", "1")}
            </Field>
          </div>
        )}
        {design === "axes-and-pairs" && (
          <Field
            id="train-step"
            label="Step d"
            unit="nm"
            error={e("generatingSet.stepNm")}
            hint={`${axesAndPairsSize(termCountJ)} samples: zero, each term at ±d, each pair at (d, d); d = max RMS / √2 keeps them inside the ball.`}
          >
            {numberInput("train-step", "generatingSet.stepNm")}
          </Field>
        )}
        {design === "uploaded" &&
          (generatingSets.length === 0 ? (
            <p className="text-sm text-muted" data-testid="no-uploaded-sets">
              No generating set has been uploaded for this model yet: upload one with the panel beside this form.
            </p>
          ) : (
            <Field id="train-set" label="Uploaded set" error={e("generatingSet.generatingSetId")}>
              <select className={selectClass} {...describedBy("train-set", e("generatingSet.generatingSetId"), false)} {...register("generatingSet.generatingSetId", { valueAsNumber: true })}>
                {generatingSets.map((s) => (
                  <option key={s.id} value={s.id}>
                    {s.label}
                  </option>
                ))}
              </select>
            </Field>
          ))}
      </fieldset>

      <fieldset className="flex flex-col gap-3 rounded border border-line bg-surface p-3">
        <legend className="px-1 text-xs font-medium uppercase tracking-wide text-muted">Validation set</legend>
        <Field id="train-validation" label="Residuals are measured on" error={e("validationSet")}>
          <select className={selectClass} {...describedBy("train-validation", e("validationSet"), false)} {...register("validationMode")}>
            <option value="random">a random set, total RMS uniform in [0, max]</option>
            <option value="uploaded">an uploaded set</option>
            <option value="none">no validation set (no residual statistics)</option>
          </select>
        </Field>
        {validationMode === "random" && (
          <div className="grid grid-cols-3 gap-3">
            <Field id="validation-size" label="Samples" error={e("validationSet.size")}>
              {numberInput("validation-size", "validationSet.size", "1")}
            </Field>
            <Field id="validation-max-rms" label="Up to" unit="nm RMS" error={e("validationSet.maxRmsNm")}>
              {numberInput("validation-max-rms", "validationSet.maxRmsNm")}
            </Field>
            <Field id="validation-seed" label="Seed" error={e("validationSet.seed")} hint="differ from the generating seed">
              {numberInput("validation-seed", "validationSet.seed", "1")}
            </Field>
          </div>
        )}
        {validationMode === "uploaded" &&
          (generatingSets.length === 0 ? (
            <p className="text-sm text-muted">No uploaded set yet: upload one with the panel beside this form.</p>
          ) : (
            <Field id="validation-set" label="Uploaded set" error={e("validationSet.generatingSetId")}>
              <select className={selectClass} {...describedBy("validation-set", e("validationSet.generatingSetId"), false)} {...register("validationSet.generatingSetId", { valueAsNumber: true })}>
                {generatingSets.map((s) => (
                  <option key={s.id} value={s.id}>
                    {s.label}
                  </option>
                ))}
              </select>
            </Field>
          ))}
      </fieldset>

      <p className="text-xs text-muted" data-testid="training-cost">
        {exactMaps > 0 ? `${exactMaps} exact far-field maps to propagate, in chunks of ${CHUNK_SAMPLES} across the workers.` : "No exact propagation: the fit uses the uploaded maps."}
      </p>
      <SubmitButton busy={isSubmitting} busyText="Queuing…">
        Queue training run
      </SubmitButton>
    </form>
  );
}
