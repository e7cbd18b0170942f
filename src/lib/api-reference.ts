/** The OpenAPI document read for people: the API reference page's sections, operations and fields. */

export type JsonSchema = {
  type?: string | string[];
  format?: string;
  enum?: unknown[];
  const?: unknown;
  items?: JsonSchema;
  properties?: Record<string, JsonSchema>;
  required?: string[];
  oneOf?: JsonSchema[];
  anyOf?: JsonSchema[];
  allOf?: JsonSchema[];
  $ref?: string;
  description?: string;
  minLength?: number;
  maxLength?: number;
  minimum?: number;
  maximum?: number;
  minItems?: number;
  maxItems?: number;
  default?: unknown;
};

type Parameter = { name: string; in: string; required?: boolean; description?: string; schema?: JsonSchema };
type Operation = {
  summary?: string;
  description?: string;
  tags?: string[];
  'x-who'?: string;
  parameters?: Parameter[];
  requestBody?: { content?: Record<string, { schema?: JsonSchema }> };
  responses?: Record<string, { description?: string }>;
};
export type OpenApiDoc = { paths: Record<string, Record<string, Operation>>; tags?: { name: string }[] };

export type ReferenceField = { name: string; type: string; required: boolean; description: string };
export type ReferenceOperation = {
  id: string;
  method: string;
  path: string;
  summary: string;
  description: string;
  who: string;
  parameters: (ReferenceField & { in: string })[];
  /** One per media type the body may be sent as (JSON, a multipart form). */
  bodies: { type: string; fields: ReferenceField[] }[];
  responses: { status: string; description: string }[];
};
export type ReferenceSection = { tag: string; operations: ReferenceOperation[] };

const quote = (value: unknown) => JSON.stringify(value);

/** A schema's type in a few words: "string (uuid)", "one of "pick", "cut"", "list of object". */
export function typeWords(schema: JsonSchema | undefined): string {
  if (!schema) return 'any';
  if (schema.$ref) return schema.$ref.split('/').pop() ?? 'object';
  if (schema.const !== undefined) return quote(schema.const);
  if (schema.enum) return schema.enum.length === 1 ? quote(schema.enum[0]) : `one of ${schema.enum.map(quote).join(', ')}`;
  const variants = schema.oneOf ?? schema.anyOf;
  if (variants) return [...new Set(variants.map(typeWords))].join(' or ');
  const types = Array.isArray(schema.type) ? schema.type : schema.type ? [schema.type] : [];
  if (types.length === 0) return 'any';
  return types
    .map((type) => {
      if (type === 'array') return `list of ${typeWords(schema.items)}`;
      if (type === 'string' && schema.format) return `string (${schema.format})`;
      return type;
    })
    .join(' or ');
}

/** The limits a schema sets, in words: "1–254 characters", "at least 0, at most 5000", "default false". */
export function limitWords(schema: JsonSchema | undefined): string {
  if (!schema) return '';
  const words: string[] = [];
  const range = (min: number | undefined, max: number | undefined, unit: string) => {
    if (min !== undefined && max !== undefined) words.push(unit ? `${min}–${max}${unit}` : `from ${min} to ${max}`);
    else if (min !== undefined) words.push(`at least ${min}${unit}`);
    else if (max !== undefined) words.push(`at most ${max}${unit}`);
  };
  range(schema.minLength, schema.maxLength, ' characters');
  range(schema.minimum, schema.maximum, '');
  range(schema.minItems, schema.maxItems, ' items');
  if (schema.default !== undefined) words.push(`default ${quote(schema.default)}`);
  return words.join('; ');
}

const describe = (schema: JsonSchema | undefined) => [schema?.description, limitWords(schema)].filter(Boolean).join('. ');

/** The variants of a union of objects, or the object itself. */
const objectVariants = (schema: JsonSchema): JsonSchema[] => {
  const variants = schema.oneOf ?? schema.anyOf;
  if (variants?.every((v) => v.properties)) return variants;
  if (schema.allOf?.every((v) => v.properties)) return [{ properties: Object.assign({}, ...schema.allOf.map((v) => v.properties)), required: schema.allOf.flatMap((v) => v.required ?? []) }];
  return schema.properties ? [schema] : [];
};

/**
 * The fields of a body, nested ones by their dotted path (`limits[].quantity`), down to `depth`
 * levels; a nested field is required within its parent. A field of a union of objects is required
 * when every variant requires it.
 */
export function bodyFields(schema: JsonSchema | undefined, prefix = '', depth = 3): ReferenceField[] {
  if (!schema || depth === 0) return [];
  const variants = objectVariants(schema);
  const names = [...new Set(variants.flatMap((v) => Object.keys(v.properties ?? {})))];
  return names.flatMap((name) => {
    const holders = variants.filter((v) => v.properties?.[name]);
    const field = holders.map((v) => v.properties?.[name] as JsonSchema);
    const merged: JsonSchema = field.length === 1 ? (field[0] as JsonSchema) : { anyOf: field };
    const required = holders.length === variants.length && variants.every((v) => v.required?.includes(name));
    const path = `${prefix}${name}`;
    const own: ReferenceField = { name: path, type: typeWords(merged), required, description: describe(merged) };
    const inner = merged.type === 'array' || (Array.isArray(merged.type) && merged.type.includes('array')) ? bodyFields(merged.items, `${path}[].`, depth - 1) : bodyFields(merged, `${path}.`, depth - 1);
    return [own, ...inner];
  });
}

const methodOrder = ['get', 'post', 'put', 'patch', 'delete'];

/** The document's operations grouped by tag, in the document's tag order, each in path order. */
export function referenceSections(doc: OpenApiDoc): ReferenceSection[] {
  const operations = Object.entries(doc.paths).flatMap(([path, methods]) =>
    Object.entries(methods)
      .filter(([method]) => methodOrder.includes(method))
      .map(([method, op]): ReferenceOperation & { tag: string } => {
        const content = op.requestBody?.content ?? {};
        return {
          tag: op.tags?.[0] ?? 'other',
          id: `${method}-${path}`.replace(/[^a-z0-9]+/gi, '-').replace(/-+$/, '').toLowerCase(),
          method: method.toUpperCase(),
          path,
          summary: op.summary ?? '',
          description: op.description ?? '',
          who: op['x-who'] ?? '',
          parameters: (op.parameters ?? []).map((p) => ({ name: p.name, in: p.in, type: typeWords(p.schema), required: Boolean(p.required), description: describe({ ...p.schema, description: p.description ?? p.schema?.description }) })),
          bodies: Object.entries(content).map(([type, c]) => ({ type, fields: bodyFields(c.schema) })),
          responses: Object.entries(op.responses ?? {}).map(([status, r]) => ({ status, description: r.description ?? '' })),
        };
      }),
  );
  const tags = [...new Set([...(doc.tags ?? []).map((t) => t.name), ...operations.map((o) => o.tag)])];
  return tags
    .map((tag) => ({
      tag,
      operations: operations
        .filter((o) => o.tag === tag)
        .sort((a, b) => a.path.localeCompare(b.path) || methodOrder.indexOf(a.method.toLowerCase()) - methodOrder.indexOf(b.method.toLowerCase()))
        .map(({ tag: _tag, ...op }) => op),
    }))
    .filter((section) => section.operations.length > 0);
}

/** Text with `code` in backticks, as the document writes it, split into plain and code parts. */
export function codeParts(text: string): { code: boolean; text: string }[] {
  return text.split('`').map((part, i) => ({ code: i % 2 === 1, text: part })).filter((part) => part.text !== '');
}
