import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { ZodError } from "zod";
import { evaluateBodySchema, parseEvaluateBody } from "@/lib/validation/evaluate";

// parseEvaluateBody checks the wavefronts in slices with yields between them; it must apply exactly the rules of
// evaluateBodySchema (one contract), with the same issues and paths.

const coefficient = fc.oneof(fc.double({ noNaN: true, min: -50, max: 50 }), fc.constant(Number.NaN), fc.string({ maxLength: 3 }), fc.constant(null));
const key = fc.oneof(fc.integer({ min: 0, max: 40 }).map(String), fc.constantFrom("x", "-1", "4.5", ""));
const wavefront = fc.oneof(
  fc.record({ ordering: fc.constantFrom("noll", "ansi"), coefficientsNm: fc.dictionary(key, coefficient, { maxKeys: 5 }) }),
  fc.record({ ordering: fc.constantFrom("noll", "zemax", 4), coefficientsNm: fc.dictionary(key, coefficient, { maxKeys: 3 }), extra: fc.boolean() }, { requiredKeys: ["ordering"] }),
  fc.constantFrom(null, 7, "wavefront", []),
);
const body = fc.record(
  {
    wavefronts: fc.array(wavefront, { minLength: 0, maxLength: 600 }),
    output: fc.constantFrom("map", "offsets", "summary", "everything"),
    offsetsNrad: fc.array(fc.tuple(fc.double({ min: -80, max: 80, noNaN: true }), fc.double({ min: -80, max: 80, noNaN: true })), { minLength: 1, maxLength: 3 }),
    jitterNrad: fc.double({ min: -1, max: 20, noNaN: true }),
  },
  { requiredKeys: ["wavefronts"] },
);

async function outcome(parse: () => unknown): Promise<{ value?: unknown; issues?: { path: PropertyKey[]; message: string }[] }> {
  try {
    return { value: await parse() };
  } catch (error) {
    if (!(error instanceof ZodError)) throw error;
    return { issues: error.issues.map(({ path, message }) => ({ path, message })) };
  }
}

describe("parseEvaluateBody", () => {
  it("accepts and refuses the same bodies as evaluateBodySchema, with the same issues", async () => {
    await fc.assert(
      fc.asyncProperty(body, async (raw) => {
        const whole = await outcome(() => evaluateBodySchema.parse(raw));
        const sliced = await outcome(() => parseEvaluateBody(raw));
        if (whole.value !== undefined) expect(sliced).toEqual(whole);
        else {
          // The sliced parse checks the envelope (every field but the wavefronts, and the output rules) first and the
          // wavefronts only when it is sound; the whole parse skips the output rules when a wavefront fails. So:
          // both refuse, every wavefront issue is one of the whole parse's, and with a sound envelope they agree.
          expect(sliced.issues).toBeDefined();
          const ofWavefronts = sliced.issues!.filter((issue) => issue.path[0] === "wavefronts" && typeof issue.path[1] === "number");
          for (const issue of ofWavefronts) expect(whole.issues).toContainEqual(issue);
          if (ofWavefronts.length === sliced.issues!.length) expect(sliced.issues).toEqual(whole.issues);
        }
      }),
      { numRuns: 150 },
    );
  });

  it("lets other work run while it checks 10,000 wavefronts", async () => {
    const raw = { wavefronts: Array.from({ length: 10_000 }, (_, i) => ({ ordering: "noll", coefficientsNm: { "4": i % 9, "11": -1 } })), output: "summary" };
    let ranBeforeTheEnd = 0;
    const parsing = parseEvaluateBody(raw).then((parsed) => ({ parsed, ticks: ranBeforeTheEnd }));
    const ticker = setInterval(() => ranBeforeTheEnd++, 0);
    const { parsed, ticks } = await parsing;
    clearInterval(ticker);
    expect(parsed.wavefronts).toHaveLength(10_000);
    expect(parsed.wavefronts[9_999]).toEqual({ ordering: "noll", coefficientsNm: { "4": 9_999 % 9, "11": -1 } });
    // 10,000 / 256 slices: the timer gets in between them (a single blocking parse would let it run 0 times).
    expect(ticks).toBeGreaterThan(0);
  });
});
