import type { ReactNode } from "react";

/** A JSON Schema as the OpenAPI document holds it (only what the page reads). */
interface Schema {
  $ref?: string;
  type?: string | string[];
  enum?: unknown[];
  const?: unknown;
  properties?: Record<string, Schema>;
  required?: string[];
  items?: Schema | Schema[];
  prefixItems?: Schema[];
  anyOf?: Schema[];
  oneOf?: Schema[];
  allOf?: Schema[];
  description?: string;
  minimum?: number;
  maximum?: number;
  exclusiveMinimum?: number;
  minItems?: number;
  maxItems?: number;
  minLength?: number;
  maxLength?: number;
  pattern?: string;
  format?: string;
  default?: unknown;
  additionalProperties?: boolean | Schema;
}

interface Parameter {
  name: string;
  in: string;
  required?: boolean;
  description?: string;
  schema?: Schema;
}

interface Media {
  schema?: Schema;
}

interface OperationObject {
  operationId?: string;
  summary?: string;
  description?: string;
  security?: unknown[];
  parameters?: Parameter[];
  requestBody?: { description?: string; content?: Record<string, Media> };
  responses?: Record<string, { description?: string; content?: Record<string, Media>; headers?: Record<string, { description?: string }> }>;
}

export interface OpenApiDocument {
  info: { title: string; version: string; description?: string };
  paths: Record<string, Record<string, OperationObject>>;
  components?: { schemas?: Record<string, Schema> };
}

export interface ListedOperation {
  method: string;
  path: string;
  anchor: string;
  operation: OperationObject;
}

const METHOD_ORDER = ["get", "post", "put", "patch", "delete"];

/** Every operation of the document, grouped by the resource after /api/v1 (in the document's path order). */
export function groupedOperations(document: OpenApiDocument): [string, ListedOperation[]][] {
  const groups = new Map<string, ListedOperation[]>();
  for (const [path, methods] of Object.entries(document.paths)) {
    const group = path.replace(/^\/api\/v1\/?/, "").split("/")[0] || "api";
    for (const method of Object.keys(methods).sort((a, b) => METHOD_ORDER.indexOf(a) - METHOD_ORDER.indexOf(b))) {
      const operation = methods[method];
      const anchor = operation.operationId ?? `${method}-${path}`.replace(/[^a-z0-9]+/gi, "-");
      (groups.get(group) ?? groups.set(group, []).get(group)!).push({ method, path, anchor, operation });
    }
  }
  return [...groups.entries()];
}

const refName = (ref: string) => ref.replace("#/components/schemas/", "");

/** A one-line summary of a schema's type: "integer ≥ 1", "array of Token", "\"noll\" | \"ansi\"". */
function typeSummary(schema: Schema | undefined): ReactNode {
  if (!schema) return "any";
  if (schema.$ref) {
    const name = refName(schema.$ref);
    return (
      <a href={`#schema-${name}`} className="text-accent underline decoration-1 underline-offset-2">
        {name}
      </a>
    );
  }
  if (schema.const !== undefined) return <span>constant</span>;
  if (schema.enum) return schema.enum.map((v) => JSON.stringify(v)).join(" | ");
  const variants = schema.anyOf ?? schema.oneOf;
  if (variants) {
    return variants.map((v, i) => (
      <span key={i}>
        {i > 0 && " | "}
        {typeSummary(v)}
      </span>
    ));
  }
  const types = Array.isArray(schema.type) ? schema.type : schema.type ? [schema.type] : [];
  const constraints: string[] = [];
  if (schema.minimum !== undefined) constraints.push(`≥ ${schema.minimum}`);
  if (schema.exclusiveMinimum !== undefined) constraints.push(`> ${schema.exclusiveMinimum}`);
  if (schema.maximum !== undefined) constraints.push(`≤ ${schema.maximum}`);
  if (schema.minItems !== undefined || schema.maxItems !== undefined) constraints.push(`${schema.minItems ?? 0}…${schema.maxItems ?? "∞"} items`);
  if (schema.maxLength !== undefined) constraints.push(`≤ ${schema.maxLength} chars`);
  if (schema.format) constraints.push(schema.format);
  if (schema.default !== undefined) constraints.push(`default ${JSON.stringify(schema.default)}`);
  let base: ReactNode = types.length > 0 ? types.join(" | ") : schema.properties ? "object" : "any";
  if (types.includes("array") && schema.items && !Array.isArray(schema.items)) {
    base = (
      <>
        {types.filter((t) => t !== "array").map((t) => `${t} | `)}array of {typeSummary(schema.items)}
      </>
    );
  } else if (types.includes("array") && (schema.prefixItems || Array.isArray(schema.items))) {
    const tuple = schema.prefixItems ?? (schema.items as Schema[]);
    base = (
      <>
        [
        {tuple.map((item, i) => (
          <span key={i}>
            {i > 0 && ", "}
            {typeSummary(item)}
          </span>
        ))}
        ]
      </>
    );
  }
  return (
    <>
      {base}
      {constraints.length > 0 && <span className="text-muted"> ({constraints.join(", ")})</span>}
    </>
  );
}

/** The fields of an object schema as a nested list, down to a few levels; references link to the schema list. */
export function SchemaView({ schema, depth = 0 }: { schema: Schema | undefined; depth?: number }) {
  if (!schema) return <p className="text-xs text-muted">No schema.</p>;
  const objectLike = schema.properties && !schema.$ref;
  const arrayItems = !schema.$ref && schema.items && !Array.isArray(schema.items) && schema.items.properties ? schema.items : null;
  return (
    <div className="font-mono text-xs">
      {!objectLike && (
        <p>
          {typeSummary(schema)}
          {schema.description && <span className="font-sans text-muted"> — {schema.description}</span>}
        </p>
      )}
      {objectLike && depth < 4 && (
        <ul className={depth > 0 ? "ml-4 border-l border-line pl-2" : ""}>
          {Object.entries(schema.properties!).map(([name, property]) => (
            <li key={name} className="py-0.5">
              <span className="font-medium text-ink">{name}</span>
              {schema.required?.includes(name) ? <span className="text-fault" title="required">*</span> : <span className="text-muted">?</span>}{" "}
              <span className="text-muted">{typeSummary(property)}</span>
              {property.description && <span className="font-sans text-muted"> — {property.description}</span>}
              {property.properties && !property.$ref && <SchemaView schema={property} depth={depth + 1} />}
              {property.items && !Array.isArray(property.items) && property.items.properties && !property.items.$ref && (
                <SchemaView schema={property.items} depth={depth + 1} />
              )}
            </li>
          ))}
        </ul>
      )}
      {arrayItems && <SchemaView schema={arrayItems} depth={depth + 1} />}
    </div>
  );
}

const METHOD_STYLE: Record<string, string> = {
  get: "border-good text-good",
  post: "border-accent text-accent",
  delete: "border-fault text-fault",
};

export function MethodBadge({ method }: { method: string }) {
  return (
    <span className={`inline-block w-14 rounded-sm border px-1 text-center font-mono text-xs uppercase ${METHOD_STYLE[method] ?? "border-line"}`}>
      {method}
    </span>
  );
}

function ContentList({ content }: { content: Record<string, Media> | undefined }) {
  if (!content) return null;
  return (
    <>
      {Object.entries(content).map(([type, media]) => (
        <div key={type} className="mt-1">
          <p className="font-mono text-xs text-muted">{type}</p>
          {media.schema && Object.keys(media.schema).length > 0 && <SchemaView schema={media.schema} />}
        </div>
      ))}
    </>
  );
}

export function OperationCard({ listed }: { listed: ListedOperation }) {
  const { method, path, anchor, operation } = listed;
  const who = operation.description?.replace(/^Who may call it: /, "").replace(/\.$/, "");
  const responses = Object.entries(operation.responses ?? {});
  return (
    <article id={anchor} className="scroll-mt-4 rounded border border-line bg-surface p-3" data-operation={`${method.toUpperCase()} ${path}`}>
      <h3 className="flex flex-wrap items-center gap-2">
        <MethodBadge method={method} />
        <span className="break-all font-mono text-sm font-medium">{path}</span>
      </h3>
      <p className="mt-1 text-sm">{operation.summary}</p>
      <p className="mt-1 text-xs">
        <span className="text-muted">Who may call it:</span> {operation.security?.length === 0 ? "anyone, no credentials" : who}
      </p>
      {operation.parameters && operation.parameters.length > 0 && (
        <div className="mt-2">
          <h4 className="text-xs font-medium text-muted">Parameters</h4>
          <table className="mt-1 w-full border-collapse text-xs">
            <tbody>
              {operation.parameters.map((p) => (
                <tr key={`${p.in}-${p.name}`} className="border-b border-line align-top last:border-0">
                  <td className="py-0.5 pr-2 font-mono font-medium">
                    {p.name}
                    {p.required && <span className="text-fault">*</span>}
                  </td>
                  <td className="py-0.5 pr-2 text-muted">{p.in}</td>
                  <td className="py-0.5 pr-2 font-mono">{typeSummary(p.schema)}</td>
                  <td className="py-0.5 text-muted">{p.description}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
      {operation.requestBody && (
        <div className="mt-2">
          <h4 className="text-xs font-medium text-muted">Request body{operation.requestBody.description && `: ${operation.requestBody.description}`}</h4>
          <ContentList content={operation.requestBody.content} />
        </div>
      )}
      <div className="mt-2">
        <h4 className="text-xs font-medium text-muted">Responses</h4>
        <ul className="mt-1 flex flex-col gap-1">
          {responses.map(([status, response]) => (
            <li key={status} className="text-xs">
              <span className={`font-mono font-medium ${status.startsWith("2") ? "text-good" : "text-muted"}`}>{status}</span> {response.description}
              {status.startsWith("2") && <ContentList content={response.content} />}
              {response.headers && (
                <ul className="ml-4 text-muted">
                  {Object.entries(response.headers).map(([name, header]) => (
                    <li key={name}>
                      <span className="font-mono">{name}</span>: {header.description}
                    </li>
                  ))}
                </ul>
              )}
            </li>
          ))}
        </ul>
      </div>
    </article>
  );
}
