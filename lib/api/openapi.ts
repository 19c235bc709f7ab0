import { OpenAPIRegistry, OpenApiGeneratorV31 } from "@asteasolutions/zod-to-openapi";
import { z } from "zod";
import { SURROGATE_NOTICE } from "../surrogate/model";
import { LIST_LIMIT_DEFAULT, LIST_LIMIT_MAX } from "../validation/list";
import { createModelSchema, createSetupSchema, createTokenSchema, retireBodySchema, reviewBodySchema, VERSION_STATES } from "../validation/registry";
import { setupSchema } from "../validation/setup";
import { versionTrainingSchema } from "../validation/training";
import { evaluateBodySchema } from "../validation/evaluate";
import { exactBodySchema } from "../validation/exact";
import { correctionBodySchema, modesBodySchema, noiseBodySchema, pruneBodySchema, requirementsBodySchema, worstCaseBodySchema } from "../validation/analysis";
import { meSchema } from "../validation/user";
import { zernikeSetSchema } from "../validation/zernike";

const jsonSchema = (schema: z.ZodType) => {
  const { $schema: _dialect, ...rest } = z.toJSONSchema(schema, { target: "draft-2020-12", io: "input", unrepresentable: "any" });
  return rest;
};

const ref = (name: string) => ({ $ref: `#/components/schemas/${name}` });
const json = (schema: object) => ({ "application/json": { schema } });

const problem = (description: string) => ({
  description,
  content: { "application/problem+json": { schema: ref("Problem") } },
});

type Status = "400" | "401" | "403" | "404" | "409" | "410" | "413" | "422" | "429" | "503";
const PROBLEMS: Record<Status, string> = {
  "400": "The body is not JSON (or not the multipart form expected)",
  "401": "No credentials, or a token that is unknown, expired or revoked (WWW-Authenticate: Bearer)",
  "403": "Authenticated but not allowed: role, scope, model list, or a token where only a session may act",
  "404": "No such resource, or one the caller may not see",
  "409": "The resource is not in a state that allows this",
  "410": "The version was retired and its sunset has passed",
  "413": "The body is over the size limit",
  "422": "The request does not validate; issues lists every problem with its path",
  "429": "Over the token's rate limit; retry after Retry-After seconds",
  "503": "The database or the job queue is down; retry after Retry-After seconds",
};

interface Operation {
  method: "get" | "post" | "delete";
  path: string;
  id: string;
  summary: string;
  /** Who may call it, in API.md's words. */
  who: string;
  /** The handler's own zod schema (JSON bodies), or the content of a non-JSON body. */
  body?: { schema?: z.ZodType; content?: Record<string, unknown>; description?: string };
  query?: { name: string; schema: object; description: string }[];
  ok: { status: string; description: string; content?: Record<string, unknown>; headers?: Record<string, unknown> };
  problems: Status[];
  public?: boolean;
}

const pathParams: Record<string, { description: string; schema: object }> = {
  slug: { description: "Model slug", schema: { type: "string", pattern: "^[a-z0-9]+(?:-[a-z0-9]+)*$" } },
  version: { description: "Explicit version number (there is no 'latest' alias)", schema: { type: "integer", minimum: 1 } },
  id: { description: "Numeric id", schema: { type: "integer", minimum: 1 } },
};

const pageQuery = [
  { name: "limit", schema: { type: "integer", minimum: 1, maximum: LIST_LIMIT_MAX, default: LIST_LIMIT_DEFAULT }, description: "Items per page" },
  { name: "cursor", schema: { type: "string" }, description: "nextCursor of the previous page" },
];

const list = (item: object) => ({
  type: "object",
  required: ["items", "nextCursor"],
  properties: { items: { type: "array", items: item }, nextCursor: { type: ["string", "null"] } },
});

const OPERATIONS: Operation[] = [
  { method: "get", path: "/api/v1/me", id: "getMe", summary: "The signed-in person (or a token's owner) and their roles", who: "any signed-in person or token", ok: { status: "200", description: "The person", content: json(ref("Me")) }, problems: ["401"] },
  {
    method: "post", path: "/api/v1/setups/check", id: "checkSetup", summary: "Check an optical setup before saving it", who: "modeller",
    body: { schema: setupSchema },
    ok: { status: "200", description: "The setup as the server would store it", content: json({ type: "object", required: ["setup"], properties: { setup: ref("Setup") } }) },
    problems: ["400", "401", "403", "422"],
  },
  { method: "get", path: "/api/v1/openapi.json", id: "getOpenApi", summary: "This document", who: "anyone", public: true, ok: { status: "200", description: "OpenAPI 3.1 document", content: { "application/json": {} } }, problems: [] },
  {
    method: "post", path: "/api/v1/tokens", id: "createToken", summary: "Create an API token; the secret is in this answer only", who: "any signed-in person (session only)",
    body: { schema: createTokenSchema },
    ok: { status: "201", description: "The token with its secret in `token`", content: json(ref("Token")) },
    problems: ["400", "401", "403", "422"],
  },
  {
    method: "get", path: "/api/v1/tokens", id: "listTokens", summary: "One's own tokens (admins: everybody's with ?all=true)", who: "session only",
    query: [{ name: "all", schema: { type: "boolean" }, description: "Every person's tokens (admins)" }],
    ok: { status: "200", description: "Tokens, never their secrets", content: json(list(ref("Token"))) }, problems: ["401", "403"],
  },
  { method: "delete", path: "/api/v1/tokens/{id}", id: "revokeToken", summary: "Revoke a token; it fails from the next request on", who: "its owner or an admin (session only)", ok: { status: "204", description: "Revoked" }, problems: ["401", "403", "404"] },
  {
    method: "get", path: "/api/v1/setups", id: "listSetups", summary: "Optical setups with their derived quantities", who: "read", query: pageQuery,
    ok: { status: "200", description: "Setups", content: json(list(ref("SetupItem"))) }, problems: ["401", "403", "422"],
  },
  {
    method: "post", path: "/api/v1/setups", id: "createSetup", summary: "Define an optical setup", who: "modeller / train",
    body: { schema: createSetupSchema }, ok: { status: "201", description: "The setup", content: json(ref("SetupItem")) }, problems: ["400", "401", "403", "409", "422"],
  },
  {
    method: "get", path: "/api/v1/models", id: "listModels", summary: "Models, searchable by text, version state and setup", who: "read",
    query: [
      { name: "q", schema: { type: "string" }, description: "Text in the slug, name or description" },
      { name: "state", schema: { enum: [...VERSION_STATES] }, description: "Only models with a version in this state" },
      { name: "setupId", schema: { type: "integer" }, description: "Only models of this setup" },
      ...pageQuery,
    ],
    ok: { status: "200", description: "Models", content: json(list(ref("Model"))) }, problems: ["401", "403", "422"],
  },
  {
    method: "post", path: "/api/v1/models", id: "createModel", summary: "Create a model (a slug bound to a setup and a Zernike set)", who: "modeller / train",
    body: { schema: createModelSchema }, ok: { status: "201", description: "The model with its setup", content: json(ref("Model")) }, problems: ["400", "401", "403", "404", "409", "422"],
  },
  { method: "get", path: "/api/v1/models/{slug}", id: "getModel", summary: "A model with its setup and versions", who: "read", ok: { status: "200", description: "The model", content: json(ref("Model")) }, problems: ["401", "403", "404"] },
  {
    method: "post", path: "/api/v1/models/{slug}/versions", id: "trainVersion", summary: "Train a new version on the job queue", who: "modeller / train",
    body: { schema: versionTrainingSchema },
    ok: { status: "202", description: "The queued run (Location: its URL)", content: json({ type: "object", required: ["run"], properties: { run: ref("Run") } }) },
    problems: ["400", "401", "403", "404", "422", "503"],
  },
  { method: "get", path: "/api/v1/models/{slug}/versions", id: "listVersions", summary: "Every version the caller may see, oldest first", who: "read", ok: { status: "200", description: "Versions", content: json(list(ref("Version"))) }, problems: ["401", "403", "404"] },
  {
    method: "post", path: "/api/v1/models/{slug}/versions/upload", id: "uploadVersion", summary: "Register a .stpm trained elsewhere as a new draft", who: "modeller / train",
    body: { content: { "application/octet-stream": { schema: { type: "string", contentMediaType: "application/octet-stream" } } }, description: "The .stpm file; an optional Repr-Digest (sha-256) is checked" },
    ok: { status: "201", description: "The new draft version", content: json(ref("Version")) }, problems: ["401", "403", "404", "413", "422"],
  },
  { method: "get", path: "/api/v1/models/{slug}/versions/{version}", id: "getVersion", summary: "A version: terms, validity, statistics, provenance, history", who: "read (drafts and versions in review: modellers and reviewers)", ok: { status: "200", description: "The version", content: json(ref("Version")) }, problems: ["401", "403", "404"] },
  {
    method: "get", path: "/api/v1/models/{slug}/versions/{version}/coefficients", id: "getCoefficients", summary: "The coefficient file, .stpm or NumPy .npz", who: "read",
    query: [{ name: "format", schema: { enum: ["stpm", "npz"], default: "stpm" }, description: "File format" }],
    ok: {
      status: "200", description: "The file, with Content-Disposition <slug>-v<v>.stpm|.npz",
      content: { "application/octet-stream": { schema: { type: "string" } }, "application/zip": { schema: { type: "string" } } },
      headers: { ETag: { schema: { type: "string" }, description: "From the coefficient checksum" }, Digest: { schema: { type: "string" }, description: "sha-256 of the bytes" } },
    },
    problems: ["401", "403", "404", "422"],
  },
  {
    method: "post", path: "/api/v1/models/{slug}/versions/{version}/evaluate", id: "evaluateVersion",
    summary: "Evaluate wavefronts against a pinned version: maps, offsets or peaks", who: "evaluate scope, or any signed-in person (drafts and versions in review: signed-in modellers and reviewers)",
    body: { schema: evaluateBodySchema },
    ok: {
      status: "200", description: "One result per wavefront, in order, with the version, its checksum and the notice", content: json(ref("EvaluateAnswer")),
      headers: {
        Deprecation: { schema: { type: "string" }, description: "RFC 9745, for a retired version before its sunset: @<unix seconds>" },
        Sunset: { schema: { type: "string" }, description: "RFC 8594 HTTP-date of the sunset" },
        Link: { schema: { type: "string" }, description: '<...versions/{successor}>; rel="successor-version"' },
      },
    },
    problems: ["400", "401", "403", "404", "410", "413", "422", "429", "503"],
  },
  {
    method: "post", path: "/api/v1/models/{slug}/versions/{version}/exact", id: "exactVersion",
    summary: "Exact far-field maps of one wavefront on the version's setup, beside the surrogate's and their difference (surrogate - exact)",
    who: "evaluate scope, or any signed-in person (the same versions as evaluate)",
    body: { content: json(ref("ExactRequest")) },
    ok: { status: "200", description: "Exact, surrogate and difference maps (pm/nrad, [iy][ix]; null at far-field nulls), the validity block and the notice", content: json(ref("ExactAnswer")) },
    problems: ["400", "401", "403", "404", "410", "413", "422", "429", "503"],
  },
  // ---- analysis of a version (API.md "Analysis"), and pruning ----
  {
    method: "post", path: "/api/v1/models/{slug}/versions/{version}/worst-case", id: "worstCase",
    summary: "Simple bound and exact worst case of the quadratic model on a WFE ball, per node and axis, with the maximising wavefront",
    who: "read, or any signed-in person (drafts and versions in review: signed-in modellers and reviewers)", body: { schema: worstCaseBodySchema },
    ok: { status: "200", description: "Bound and exact maps (pm/nrad, [iy][ix]), the worst node and its wavefront, the notice", content: json(ref("WorstCaseAnswer")) },
    problems: ["400", "401", "403", "404", "413", "422", "429", "503"],
  },
  {
    method: "post", path: "/api/v1/models/{slug}/versions/{version}/requirements", id: "requirements",
    summary: "Limits on each linear (nm) and cross (nm^2) contribution that guarantee a TTL budget on the whole map, verified by a Monte Carlo run",
    who: "read, or any signed-in person (the same versions as worst-case)", body: { schema: requirementsBodySchema },
    ok: { status: "202", description: "The queued run (kind monte-carlo); its result holds the limits and what the Monte Carlo found", content: json({ type: "object", required: ["run"], properties: { run: ref("Run") } }) },
    problems: ["400", "401", "403", "404", "413", "422", "503"],
  },
  {
    method: "post", path: "/api/v1/models/{slug}/versions/{version}/modes", id: "couplingModes",
    summary: "Coupling modes: SVD of the linear maps, unit-norm term combinations strongest first; with a wavefront, its linear TTL split by mode",
    who: "read, or any signed-in person (the same versions as worst-case)", body: { schema: modesBodySchema },
    ok: { status: "200", description: "Modes with singular values (pm/nrad per nm), weights and TTL maps of 1 nm of each, the notice", content: json(ref("ModesAnswer")) },
    problems: ["400", "401", "403", "404", "413", "422", "429", "503"],
  },
  {
    method: "post", path: "/api/v1/models/{slug}/versions/{version}/correction", id: "correction",
    summary: "Adjustment of chosen terms (each within +-limitNm) that minimises the worst TTL over the map on the model; never worse than none",
    who: "read, or any signed-in person (the same versions as worst-case)", body: { schema: correctionBodySchema },
    ok: { status: "200", description: "The adjustment, the corrected wavefront, maps and peaks before and after, the notice", content: json(ref("CorrectionAnswer")) },
    problems: ["400", "401", "403", "404", "413", "422", "429", "503"],
  },
  {
    method: "post", path: "/api/v1/models/{slug}/versions/{version}/noise", id: "noiseBudget",
    summary: "TTL noise ASD sqrt(c_x^2 + c_y^2) ASD_theta(f) at a DC offset (null: the worst node) against a length-noise allocation, margin in dB",
    who: "read, or any signed-in person (the same versions as worst-case)", body: { schema: noiseBodySchema },
    ok: { status: "200", description: "Frequencies, TTL noise and allocation (pm/sqrt(Hz)), margin (dB), failing frequencies, the notice", content: json(ref("NoiseAnswer")) },
    problems: ["400", "401", "403", "404", "413", "422", "429", "503"],
  },
  {
    method: "post", path: "/api/v1/wavefronts/fit", id: "fitWavefront",
    summary: "Least-squares Zernike fit of a measured height map over the aperture (NaN pixels have no data)", who: "read, or any signed-in person",
    body: {
      content: {
        "multipart/form-data": {
          schema: {
            type: "object", required: ["file", "pixelSizeM", "apertureDiameterM", "units", "zernike"],
            properties: {
              file: { type: "string", contentMediaType: "application/octet-stream", description: ".npy 2-D float array or CSV grid (one map row per line)" },
              pixelSizeM: { type: "number" }, apertureDiameterM: { type: "number" }, units: { enum: ["nm", "m"] },
              zernike: { type: "string", description: "JSON Zernike set, e.g. {\"ordering\":\"noll\",\"indices\":[4,5,6]}" },
            },
          },
        },
      },
    },
    ok: { status: "200", description: "The fitted wavefront, piston and tilt removed, residual RMS and pixels used", content: json(ref("FitAnswer")) },
    problems: ["400", "401", "403", "413", "422", "429", "503"],
  },
  {
    method: "post", path: "/api/v1/models/{slug}/versions/{version}/prune", id: "pruneVersion",
    summary: "Prune a version on the queue: a derived draft keeping the terms whose noise bound reaches the threshold, with its own validation statistics",
    who: "modeller / train", body: { schema: pruneBodySchema },
    ok: { status: "202", description: "The queued run (kind pruning); it creates the draft, its parent recorded, the bound and the seen error in its pruning report", content: json({ type: "object", required: ["run"], properties: { run: ref("Run") } }) },
    problems: ["400", "401", "403", "404", "413", "422", "503"],
  },
  {
    method: "post", path: "/api/v1/models/{slug}/versions/{version}/review", id: "reviewVersion", summary: "Approve a version in review (-> released) or return it to draft with a comment",
    who: "a reviewer who did not make the version (session only)", body: { schema: reviewBodySchema },
    ok: { status: "200", description: "The version after the decision (its modeller is sent the decision and the comment by e-mail)", content: json(ref("Version")) }, problems: ["400", "401", "403", "404", "409", "422"],
  },
  {
    method: "post", path: "/api/v1/models/{slug}/versions/{version}/retire", id: "retireVersion", summary: "Retire a released version with a reason, a sunset and an optional successor",
    who: "admin (session only)", body: { schema: retireBodySchema },
    ok: { status: "200", description: "The version, retired", content: json(ref("Version")) }, problems: ["400", "401", "403", "404", "409", "422"],
  },
  { method: "post", path: "/api/v1/models/{slug}/versions/{version}/submit", id: "submitVersion", summary: "Submit a draft for review", who: "its modeller (session or train token)", ok: { status: "200", description: "The version, in-review (every other reviewer is told by e-mail)", content: json(ref("Version")) }, problems: ["401", "403", "404", "409"] },
  {
    method: "post", path: "/api/v1/models/{slug}/generating-sets", id: "uploadGeneratingSet", summary: "Upload a generating set (.npz from numpy.savez or savez_compressed)", who: "modeller / train",
    body: { content: { "multipart/form-data": { schema: { type: "object", required: ["file"], properties: { file: { type: "string", contentMediaType: "application/zip" } } } } } },
    ok: { status: "201", description: "The stored set", content: json(ref("GeneratingSet")) }, problems: ["400", "401", "403", "404", "413", "422"],
  },
  { method: "get", path: "/api/v1/models/{slug}/generating-sets", id: "listGeneratingSets", summary: "The model's uploaded generating sets", who: "read", ok: { status: "200", description: "Sets", content: json(list(ref("GeneratingSet"))) }, problems: ["401", "403", "404"] },
  {
    method: "get", path: "/api/v1/runs", id: "listRuns", summary: "Runs, optionally of one model", who: "read",
    query: [{ name: "model", schema: { type: "string" }, description: "Model slug" }, ...pageQuery],
    ok: { status: "200", description: "Runs", content: json(list(ref("Run"))) }, problems: ["401", "403", "422"],
  },
  { method: "get", path: "/api/v1/runs/{id}", id: "getRun", summary: "A run with its progress and log", who: "read", ok: { status: "200", description: "The run", content: json(ref("Run")) }, problems: ["401", "403", "404"] },
  { method: "post", path: "/api/v1/runs/{id}/cancel", id: "cancelRun", summary: "Cancel a queued or running run; no version is written", who: "its creator or an admin", ok: { status: "200", description: "The run, cancelled", content: json(ref("Run")) }, problems: ["401", "403", "404", "409"] },
];

const RUN_SCHEMA = {
  type: "object",
  required: ["id", "kind", "model", "state", "progress", "version", "result", "error", "worker", "createdAt", "startedAt", "finishedAt"],
  properties: {
    id: { type: "integer" },
    kind: { enum: ["training", "pruning", "monte-carlo"] },
    model: { type: "string" },
    state: { enum: ["queued", "running", "succeeded", "failed", "cancelled"] },
    progress: {
      type: "object",
      required: ["done", "total", "fraction", "perSecond", "etaSeconds"],
      properties: { done: { type: "integer" }, total: { type: "integer" }, fraction: { type: "number" }, perSecond: { type: ["number", "null"] }, etaSeconds: { type: ["number", "null"] } },
    },
    version: { type: ["integer", "null"] },
    result: { type: ["object", "null"] },
    error: { type: ["string", "null"] },
    worker: { type: ["string", "null"], description: "host:pid" },
    createdAt: { type: "string", format: "date-time" },
    startedAt: { type: ["string", "null"], format: "date-time" },
    finishedAt: { type: ["string", "null"], format: "date-time" },
    log: { type: "array", items: { type: "object", properties: { at: { type: "string" }, level: { type: "string" }, message: { type: "string" }, worker: { type: ["string", "null"] } } } },
  },
};

const METHOD_STATUS_CODES = (op: Operation) => {
  const responses: Record<string, { description: string; content?: Record<string, unknown>; headers?: Record<string, unknown> }> = {
    [op.ok.status]: { description: op.ok.description, ...(op.ok.content ? { content: op.ok.content } : {}), ...(op.ok.headers ? { headers: op.ok.headers } : {}) },
  };
  for (const status of op.problems) responses[status] = problem(PROBLEMS[status]);
  return responses;
};

/** Register one operation: its JSON body straight from the handler's zod schema (zod-to-openapi converts it). */
function register(registry: OpenAPIRegistry, op: Operation): void {
  const pathParameters = [...op.path.matchAll(/\{(\w+)\}/g)].map(([, name]) => ({ name, in: "path" as const, required: true, ...pathParams[name] }));
  const queryParameters = (op.query ?? []).map((q) => ({ name: q.name, in: "query" as const, required: false, schema: q.schema, description: q.description }));
  const content = op.body?.schema ? { "application/json": { schema: op.body.schema } } : op.body?.content;
  registry.registerPath({
    method: op.method,
    path: op.path.replace(/\{(\w+)\}/g, "{$1}"),
    operationId: op.id,
    summary: op.summary,
    description: `Who may call it: ${op.who}.`,
    ...(op.public ? { security: [] } : {}),
    ...(pathParameters.length + queryParameters.length > 0 ? { parameters: [...pathParameters, ...queryParameters] as never } : {}),
    ...(content ? { request: { body: { required: true, content: content as never, ...(op.body?.description ? { description: op.body.description } : {}) } } } : {}),
    responses: METHOD_STATUS_CODES(op) as never,
  });
}

/** The operations this document describes, as `METHOD path` (the OpenAPI test compares them with the handlers on disk). */
export function describedOperations(): string[] {
  return OPERATIONS.map((op) => `${op.method.toUpperCase()} ${op.path}`);
}

/**
 * The OpenAPI 3.1 description of /api/v1, generated by @asteasolutions/zod-to-openapi: request bodies from the very
 * zod schemas the handlers parse with, shared components from the same schemas, responses described beside them.
 */
export function openApiDocument() {
  const registry = new OpenAPIRegistry();
  for (const [name, schema] of Object.entries(COMPONENT_SCHEMAS())) registry.registerComponent("schemas", name, schema as never);
  registry.registerComponent("securitySchemes", "session", { type: "apiKey", in: "cookie", name: "next-auth.session-token", description: "Browser session from signing in at /sign-in." });
  registry.registerComponent("securitySchemes", "bearer", {
    type: "http", scheme: "bearer", description: "An API token (stp_...) created on the tokens page; it acts for its owner within its scopes and models.",
  });
  for (const op of OPERATIONS) register(registry, op);
  const document = new OpenApiGeneratorV31(registry.definitions).generateDocument({
    openapi: "3.1.0",
    info: { title: "Stillpoint API", version: "1", description: `Tilt-to-length surrogate model registry. ${SURROGATE_NOTICE}` },
    servers: [{ url: "/" }],
    security: [{ session: [] }, { bearer: [] }],
  });
  return document;
}

/** Shared schemas: the inputs from the handlers' zod schemas, the answers described here. */
function COMPONENT_SCHEMAS(): Record<string, unknown> {
  return {
    Setup: jsonSchema(setupSchema),
    ZernikeSet: jsonSchema(zernikeSetSchema),
    Me: jsonSchema(meSchema),
    CreateSetup: jsonSchema(createSetupSchema),
    CreateModel: jsonSchema(createModelSchema),
    CreateToken: jsonSchema(createTokenSchema),
    TrainVersion: jsonSchema(versionTrainingSchema),
    EvaluateRequest: jsonSchema(evaluateBodySchema),
    EvaluateAnswer: {
      type: "object",
      required: ["model", "version", "state", "coefficientsSha256", "thetaNrad", "results", "notice"],
      properties: {
        model: { type: "string" }, version: { type: "integer" }, state: { enum: [...VERSION_STATES] }, coefficientsSha256: { type: "string" },
        thetaNrad: { type: "array", items: { type: "number" } },
        results: {
          type: "array",
          items: {
            type: "object",
            required: ["peakAbsTtlPmPerNrad", "peakAt", "validity"],
            properties: {
              ttlXPmPerNrad: { type: "array", items: { type: "array", items: { type: "number" } }, description: "[iy][ix], output map only" },
              ttlYPmPerNrad: { type: "array", items: { type: "array", items: { type: "number" } } },
              offsets: { type: "array", items: { type: "object", properties: { thetaXNrad: { type: "number" }, thetaYNrad: { type: "number" }, ttlXPmPerNrad: { type: "number" }, ttlYPmPerNrad: { type: "number" } } } },
              peakAbsTtlPmPerNrad: { type: "number" },
              peakAt: { type: "object", properties: { thetaXNrad: { type: "number" }, thetaYNrad: { type: "number" }, axis: { enum: ["x", "y"] } } },
              peakLengthNoisePm: { type: "number", description: "jitterNrad * max sqrt(c_x^2 + c_y^2), with jitterNrad only" },
              validity: { type: "object", properties: { inRange: { type: "boolean" }, warnings: { type: "array", items: { type: "string" } } } },
            },
          },
        },
        notice: { type: "string", const: SURROGATE_NOTICE },
      },
    },
    ExactRequest: jsonSchema(exactBodySchema),
    ExactAnswer: {
      type: "object",
      required: ["model", "version", "state", "coefficientsSha256", "thetaNrad", "exact", "surrogate", "differencePmPerNrad", "maxAbsDifferencePmPerNrad", "maxAbsDifferenceAt", "validity", "notice"],
      properties: {
        model: { type: "string" }, version: { type: "integer" }, state: { enum: [...VERSION_STATES] }, coefficientsSha256: { type: "string" },
        thetaNrad: { type: "array", items: { type: "number" } },
        exact: { type: "object", properties: { ttlXPmPerNrad: { type: "array", items: { type: "array", items: { type: ["number", "null"] } } }, ttlYPmPerNrad: { type: "array", items: { type: "array", items: { type: ["number", "null"] } } }, peakAbsTtlPmPerNrad: { type: "number" } } },
        surrogate: { type: "object", properties: { ttlXPmPerNrad: { type: "array", items: { type: "array", items: { type: ["number", "null"] } } }, ttlYPmPerNrad: { type: "array", items: { type: "array", items: { type: ["number", "null"] } } }, peakAbsTtlPmPerNrad: { type: "number" } } },
        differencePmPerNrad: { type: "object", description: "surrogate - exact per node", properties: { x: { type: "array", items: { type: "array", items: { type: ["number", "null"] } } }, y: { type: "array", items: { type: "array", items: { type: ["number", "null"] } } } } },
        maxAbsDifferencePmPerNrad: { type: "number" },
        maxAbsDifferenceAt: { type: ["object", "null"], properties: { thetaXNrad: { type: "number" }, thetaYNrad: { type: "number" }, axis: { enum: ["x", "y"] } } },
        validity: { type: "object", properties: { inRange: { type: "boolean" }, warnings: { type: "array", items: { type: "string" } } } },
        notice: { type: "string", const: SURROGATE_NOTICE },
      },
    },
    WorstCaseAnswer: {
      type: "object",
      required: ["model", "version", "state", "coefficientsSha256", "thetaNrad", "boundPmPerNrad", "exactPmPerNrad", "worst", "notice"],
      properties: {
        model: { type: "string" }, version: { type: "integer" }, state: { enum: [...VERSION_STATES] }, coefficientsSha256: { type: "string" },
        thetaNrad: { type: "array", items: { type: "number" } },
        boundPmPerNrad: { type: "object", properties: { x: { type: "array", items: { type: "array", items: { type: "number" } } }, y: { type: "array", items: { type: "array", items: { type: "number" } } } }, description: "|c0| + ||A|| r + |lambda|_max(B) r^2" },
        exactPmPerNrad: { type: "object", properties: { x: { type: "array", items: { type: "array", items: { type: "number" } } }, y: { type: "array", items: { type: "array", items: { type: "number" } } } }, description: "max |c(a)| over ||a|| <= r (trust-region subproblem)" },
        worst: {
          type: "object",
          required: ["valuePmPerNrad", "lengthNoisePm", "thetaXNrad", "thetaYNrad", "axis", "wavefront"],
          properties: {
            valuePmPerNrad: { type: "number" }, lengthNoisePm: { type: ["number", "null"] }, thetaXNrad: { type: "number" }, thetaYNrad: { type: "number" },
            axis: { enum: ["x", "y"] }, solution: { enum: ["interior", "boundary", "hard"] }, wavefront: ref("Wavefront"),
          },
        },
        validity: { type: "object" },
        notice: { type: "string", const: SURROGATE_NOTICE },
      },
    },
    Wavefront: { type: "object", required: ["ordering", "coefficientsNm"], properties: { ordering: { enum: ["noll", "ansi"] }, coefficientsNm: { type: "object", additionalProperties: { type: "number" } } } },
    ModesAnswer: {
      type: "object",
      required: ["model", "version", "coefficientsSha256", "modes", "notice"],
      properties: {
        model: { type: "string" }, version: { type: "integer" }, coefficientsSha256: { type: "string" },
        modes: {
          type: "array",
          items: {
            type: "object", required: ["singularValue", "coefficientsNm"],
            properties: {
              singularValue: { type: "number" }, coefficientsNm: { type: "object", additionalProperties: { type: "number" } },
              ttlPmPerNrad: { type: "object", properties: { x: { type: "array", items: { type: "array", items: { type: "number" } } }, y: { type: "array", items: { type: "array", items: { type: "number" } } } } },
              projection: { type: "object", properties: { amplitudeNm: { type: "number" }, energyFraction: { type: "number" }, peakPmPerNrad: { type: "number" } } },
            },
          },
        },
        notice: { type: "string", const: SURROGATE_NOTICE },
      },
    },
    CorrectionAnswer: {
      type: "object",
      required: ["model", "version", "coefficientsSha256", "adjustmentNm", "corrected", "before", "after", "notice"],
      properties: {
        model: { type: "string" }, version: { type: "integer" }, coefficientsSha256: { type: "string" },
        adjustmentNm: { type: "object", additionalProperties: { type: "number" } }, corrected: ref("Wavefront"),
        before: { type: "object", properties: { peakAbsTtlPmPerNrad: { type: "number" } } }, after: { type: "object", properties: { peakAbsTtlPmPerNrad: { type: "number" } } },
        notice: { type: "string", const: SURROGATE_NOTICE },
      },
    },
    NoiseAnswer: {
      type: "object",
      required: ["model", "version", "coefficientsSha256", "frequencyHz", "ttlNoisePmPerRtHz", "allocationPmPerRtHz", "marginDb", "notice"],
      properties: {
        model: { type: "string" }, version: { type: "integer" }, coefficientsSha256: { type: "string" },
        offsetNrad: { type: "array", items: { type: "number" } },
        frequencyHz: { type: "array", items: { type: "number" } }, ttlNoisePmPerRtHz: { type: "array", items: { type: "number" } },
        allocationPmPerRtHz: { type: "array", items: { type: "number" } }, marginDb: { type: "array", items: { type: ["number", "null"] } },
        failingHz: { type: "array", items: { type: "number" } },
        notice: { type: "string", const: SURROGATE_NOTICE },
      },
    },
    FitAnswer: {
      type: "object", required: ["wavefront", "residualRmsNm", "samplesInAperture"],
      properties: {
        wavefront: ref("Wavefront"), residualRmsNm: { type: "number" }, samplesInAperture: { type: "integer" }, removedNm: { type: "object" }, mapRmsNm: { type: "number" },
        pictures: {
          type: "object",
          description: "The map, the fit and the residual (nm) on samples x samples cell centres over the aperture (x/R, y/R from -1 to 1, row-major [iy][ix], y up), nearest pixel, 6 significant digits; null outside the aperture or without data",
          properties: { samples: { type: "integer" }, mapNm: { type: "array", items: { type: ["number", "null"] } }, fitNm: { type: "array", items: { type: ["number", "null"] } }, residualNm: { type: "array", items: { type: ["number", "null"] } } },
        },
      },
    },
    SetupItem: {
      type: "object",
      required: ["id", "name", "setup", "derived"],
      properties: {
        id: { type: "integer" }, name: { type: "string" }, setup: ref("Setup"),
        derived: { type: "object", properties: { diffractionAngleNrad: { type: "number" }, beamToApertureRatio: { type: "number" }, fresnelNumber: { type: "number" }, onAxisGain: { type: "number" } } },
      },
    },
    Model: {
      type: "object",
      required: ["slug", "name", "description", "setupId", "zernike", "versions", "latestReleasedVersion"],
      properties: {
        slug: { type: "string" }, name: { type: "string" }, description: { type: ["string", "null"] }, setupId: { type: "integer" }, zernike: ref("ZernikeSet"),
        versions: { type: "array", items: { type: "object", properties: { version: { type: "integer" }, order: { enum: [1, 2] }, state: { enum: [...VERSION_STATES] }, termCount: { type: "integer" } } } },
        latestReleasedVersion: { type: ["integer", "null"] },
        setup: ref("SetupItem"),
      },
    },
    Version: {
      type: "object",
      required: ["model", "version", "state", "order", "setup", "zernike", "terms", "validity", "statistics", "provenance", "fit", "pruning", "coefficientsSha256", "parentVersion", "history", "retirement", "createdBy", "createdAt"],
      properties: {
        model: { type: "string" }, version: { type: "integer" }, state: { enum: [...VERSION_STATES] }, order: { enum: [1, 2] },
        setup: ref("Setup"), zernike: ref("ZernikeSet"),
        terms: { type: "array", items: { type: "array", items: { type: "integer" }, maxItems: 2 }, description: "Noll indices each term multiplies: [] constant, [i] linear, [i, j] product" },
        validity: { type: "object", properties: { maxTotalRmsNm: { type: "number" }, termBoundsNm: { type: "array", items: { type: "object", properties: { noll: { type: "integer" }, minNm: { type: "number" }, maxNm: { type: "number" } } } } } },
        statistics: { type: ["object", "null"] }, provenance: { type: "object" }, fit: { type: "object" }, pruning: { type: ["object", "null"] },
        coefficientsSha256: { type: "string" }, parentVersion: { type: ["integer", "null"] },
        history: { type: "array", items: { type: "object", properties: { state: { type: "string" }, at: { type: "string" }, by: { type: ["string", "null"] }, comment: { type: ["string", "null"] } } } },
        retirement: { type: ["object", "null"], properties: { reason: { type: "string" }, retiredAt: { type: "string" }, sunsetAt: { type: "string" }, successorVersion: { type: ["integer", "null"] } } },
        createdBy: { type: ["string", "null"] }, createdAt: { type: "string" },
        notice: { type: "string", const: SURROGATE_NOTICE },
      },
    },
    Token: {
      type: "object",
      required: ["id", "name", "scopes", "models", "expiresAt", "createdAt"],
      properties: {
        id: { type: "integer" }, name: { type: "string" }, scopes: { type: "array", items: { enum: ["read", "evaluate", "train"] } },
        models: { type: ["array", "null"], items: { type: "string" } }, expiresAt: { type: ["string", "null"] }, createdAt: { type: "string" },
        lastUsedAt: { type: ["string", "null"] }, useCount: { type: "integer" }, revokedAt: { type: ["string", "null"] }, owner: { type: "string" },
        token: { type: "string", description: "The secret, only in the answer to POST /tokens" },
      },
    },
    GeneratingSet: {
      type: "object",
      required: ["id", "samples", "sha256", "createdAt"],
      properties: { id: { type: "integer" }, samples: { type: "integer" }, sha256: { type: "string" }, createdAt: { type: "string" }, fileName: { type: ["string", "null"] }, sizeBytes: { type: "integer" } },
    },
    Run: RUN_SCHEMA,
    Problem: {
      type: "object",
      description: "RFC 9457 problem details.",
      required: ["type", "title", "status"],
      properties: {
        type: { type: "string" }, title: { type: "string" }, status: { type: "integer" }, detail: { type: "string" }, instance: { type: "string" },
        issues: { type: "array", items: { type: "object", required: ["path", "message"], properties: { path: { type: "string" }, message: { type: "string" } } } },
      },
    },
  };
}
