/**
 * A JSON Schema (zod's output, as in the OpenAPI document) written as a short type outline for people:
 * `{ id: integer, name: string, roles?: ("a" | "b")[] }`, nested objects indented, references to components
 * followed (a reference met again inside itself is written by name).
 */
type Schema = Record<string, unknown> | boolean;

const refName = (ref: string) => ref.split('/').pop() ?? ref;

export function schemaOutline(schema: Schema, components: Record<string, Schema>, indent = 0, seen: string[] = []): string {
  // JSON Schema allows true (anything) and false (nothing) as schemas
  if (typeof schema === 'boolean') return schema ? 'any' : 'nothing';
  const pad = (n: number) => '  '.repeat(n);
  if (typeof schema.$ref === 'string') {
    const name = refName(schema.$ref);
    const target = components[name];
    if (target === undefined || seen.includes(name)) return name;
    return schemaOutline(target, components, indent, [...seen, name]);
  }
  if ('const' in schema) return JSON.stringify(schema.const);
  if (Array.isArray(schema.enum)) return schema.enum.map((v) => JSON.stringify(v)).join(' | ');
  for (const k of ['anyOf', 'oneOf'] as const) {
    const alts = schema[k];
    if (Array.isArray(alts)) return alts.map((a) => schemaOutline(a as Schema, components, indent, seen)).join(' | ');
  }
  if (Array.isArray(schema.allOf)) return schema.allOf.map((a) => schemaOutline(a as Schema, components, indent, seen)).join(' & ');
  const type = schema.type;
  if (Array.isArray(type)) return type.join(' | ');
  if (type === 'array') {
    const items = (schema.items ?? {}) as Schema;
    const inner = schemaOutline(items, components, indent, seen);
    return /[ |&]/.test(inner) && !inner.startsWith('{') ? `(${inner})[]` : `${inner}[]`;
  }
  if (type === 'object' || schema.properties) {
    const props = (schema.properties ?? {}) as Record<string, Schema>;
    const required = new Set((schema.required as string[] | undefined) ?? []);
    const extra = schema.additionalProperties;
    const lines = Object.entries(props).map(([k, v]) => `${pad(indent + 1)}${k}${required.has(k) ? '' : '?'}: ${schemaOutline(v, components, indent + 1, seen)}`);
    if (extra !== undefined && extra !== false) lines.push(`${pad(indent + 1)}[key: string]: ${schemaOutline(extra as Schema, components, indent + 1, seen)}`);
    if (!lines.length) return extra === false ? '{}' : 'object';
    return `{\n${lines.join(',\n')}\n${pad(indent)}}`;
  }
  if (type === 'null') return 'null';
  if (typeof type === 'string') return type === 'string' && typeof schema.contentMediaType === 'string' ? `${schema.contentMediaType} data` : type;
  return 'any';
}
