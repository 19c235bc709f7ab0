import { describe, expect, it } from "vitest";
import { GET } from "@/app/api/v1/openapi.json/route";
import { MAX_POINTS_PER_AXIS, MAX_PUPIL_SAMPLES, MIN_POINTS_PER_AXIS, MIN_PUPIL_SAMPLES } from "@/lib/optics/setup";
import { apiOperations } from "../helpers/routes";

describe("GET /api/v1/openapi.json", () => {
  it("serves an OpenAPI 3.1 document that describes every /api/v1 route handler", async () => {
    const response = await GET(new Request("http://localhost/api/v1/openapi.json"), {});
    expect(response.status).toBe(200);
    const document = await response.json();
    expect(document.openapi).toBe("3.1.0");
    const described = Object.entries(document.paths as Record<string, Record<string, unknown>>).flatMap(([p, methods]) =>
      Object.keys(methods).map((method) => `${method.toUpperCase()} ${p}`),
    );
    expect(described.sort()).toEqual(apiOperations());
    expect(apiOperations().length).toBeGreaterThanOrEqual(20);
  });

  it("describes the setup with the fields and limits the handler enforces", async () => {
    const document = await (await GET(new Request("http://localhost/api/v1/openapi.json"), {})).json();
    const setup = document.components.schemas.Setup;
    expect(setup.required).toEqual(
      expect.arrayContaining(["wavelengthNm", "apertureDiameterM", "beamRadiusM", "distanceM", "farField", "pupilSamples"]),
    );
    expect(setup.additionalProperties).toBe(false);
    // The limits are the numerical core's own (lib/optics/setup.ts), not repeated here.
    expect(setup.properties.pupilSamples).toMatchObject({
      type: "integer", minimum: MIN_PUPIL_SAMPLES, maximum: MAX_PUPIL_SAMPLES,
    });
    expect(setup.properties.farField.properties.pointsPerAxis).toMatchObject({
      type: "integer", minimum: MIN_POINTS_PER_AXIS, maximum: MAX_POINTS_PER_AXIS,
    });
  });
});
