import { z } from "zod";
import { SURROGATE_NOTICE } from "../surrogate/model";
import { setupSchema } from "../validation/setup";
import { meSchema } from "../validation/user";

const jsonSchema = (schema: z.ZodType) => {
  const { $schema: _dialect, ...rest } = z.toJSONSchema(schema, { target: "draft-2020-12", io: "input" });
  return rest;
};

const problem = (description: string) => ({
  description,
  content: { "application/problem+json": { schema: { $ref: "#/components/schemas/Problem" } } },
});

/** The OpenAPI 3.1 description of /api/v1, built from the same zod schemas the handlers use. */
export function openApiDocument() {
  return {
    openapi: "3.1.0",
    info: {
      title: "Stillpoint API",
      version: "1",
      description: `Tilt-to-length surrogate model registry. ${SURROGATE_NOTICE}`,
    },
    servers: [{ url: "/" }],
    components: {
      securitySchemes: {
        session: {
          type: "apiKey",
          in: "cookie",
          name: "next-auth.session-token",
          description: "Browser session from signing in at /sign-in.",
        },
      },
      schemas: {
        Setup: jsonSchema(setupSchema),
        Me: jsonSchema(meSchema),
        Problem: {
          type: "object",
          description: "RFC 9457 problem details.",
          required: ["type", "title", "status"],
          properties: {
            type: { type: "string" },
            title: { type: "string" },
            status: { type: "integer" },
            detail: { type: "string" },
            instance: { type: "string" },
            issues: {
              type: "array",
              items: {
                type: "object",
                required: ["path", "message"],
                properties: { path: { type: "string" }, message: { type: "string" } },
              },
            },
          },
        },
      },
    },
    security: [{ session: [] }],
    paths: {
      "/api/v1/me": {
        get: {
          operationId: "getMe",
          summary: "The signed-in person and their roles",
          responses: {
            "200": { description: "The person", content: { "application/json": { schema: { $ref: "#/components/schemas/Me" } } } },
            "401": problem("Not signed in"),
          },
        },
      },
      "/api/v1/setups/check": {
        post: {
          operationId: "checkSetup",
          summary: "Check an optical setup before saving it (modeller role)",
          requestBody: {
            required: true,
            content: { "application/json": { schema: { $ref: "#/components/schemas/Setup" } } },
          },
          responses: {
            "200": {
              description: "The setup is valid; it is returned as the server would store it",
              content: {
                "application/json": {
                  schema: {
                    type: "object",
                    required: ["setup"],
                    properties: { setup: { $ref: "#/components/schemas/Setup" } },
                  },
                },
              },
            },
            "400": problem("The body is not JSON"),
            "401": problem("Not signed in"),
            "403": problem("The modeller role is required"),
            "422": problem("The setup is invalid; issues lists every problem"),
          },
        },
      },
      "/api/v1/openapi.json": {
        get: {
          operationId: "getOpenApi",
          summary: "This document",
          security: [],
          responses: { "200": { description: "OpenAPI 3.1 document", content: { "application/json": {} } } },
        },
      },
    },
  };
}
