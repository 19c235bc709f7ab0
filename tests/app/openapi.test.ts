import { readdirSync, statSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { GET } from "@/app/api/v1/openapi.json/route";
import { REPO_ROOT } from "../helpers/test-database";

/** URL paths of every route handler under app/api/v1, found on disk. */
function apiRoutes(): string[] {
  const found: string[] = [];
  const walk = (dir: string, segments: string[]) => {
    for (const entry of readdirSync(dir)) {
      const full = path.join(dir, entry);
      if (statSync(full).isDirectory()) walk(full, [...segments, entry.replace(/^\[(.+)\]$/, "{$1}")]);
      else if (entry === "route.ts") found.push("/api/v1/" + segments.join("/"));
    }
  };
  walk(path.join(REPO_ROOT, "app", "api", "v1"), []);
  return found.sort();
}

describe("GET /api/v1/openapi.json", () => {
  it("serves an OpenAPI 3.1 document that describes every /api/v1 route handler", async () => {
    const response = await GET(new Request("http://localhost/api/v1/openapi.json"), {});
    expect(response.status).toBe(200);
    const document = await response.json();
    expect(document.openapi).toBe("3.1.0");
    expect(Object.keys(document.paths).sort()).toEqual(apiRoutes());
  });

  it("describes the setup with the fields and limits the handler enforces", async () => {
    const document = await (await GET(new Request("http://localhost/api/v1/openapi.json"), {})).json();
    const setup = document.components.schemas.Setup;
    expect(setup.required).toEqual(
      expect.arrayContaining(["wavelengthNm", "apertureDiameterM", "beamRadiusM", "distanceM", "farField", "pupilSamples"]),
    );
    expect(setup.additionalProperties).toBe(false);
    expect(setup.properties.pupilSamples).toMatchObject({ type: "integer", minimum: 16, maximum: 2048 });
  });
});
