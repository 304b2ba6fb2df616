/**
 * Form helpers: validate values with the shared zod schema (the same one the server parses with) and merge
 * the server's field issues (ApiError.issues) so each message lands beside its field.
 */
import type { ZodType } from 'zod';
import { ApiError } from '@/lib/api';

export type FieldErrors = Record<string, string>;

/** Runs the schema; returns the parsed value or the first message per field path ("a.b"). */
export function validate<T>(schema: ZodType<T>, values: unknown): { ok: true; data: T } | { ok: false; errors: FieldErrors } {
  const r = schema.safeParse(values);
  if (r.success) return { ok: true, data: r.data };
  const errors: FieldErrors = {};
  for (const issue of r.error.issues) {
    const key = issue.path.map(String).join('.') || '_form';
    if (!(key in errors)) errors[key] = issue.message;
  }
  return { ok: false, errors };
}

/**
 * Field errors from a failed request: the server's zod issues by path, and for any other failure the
 * message under `_form` (shown above the buttons).
 */
export function serverErrors(error: unknown, fields: readonly string[] = []): FieldErrors {
  if (!error) return {};
  const out: FieldErrors = {};
  if (error instanceof ApiError) {
    for (const i of error.issues) if (!(i.path in out)) out[i.path || '_form'] = i.message;
    const placed = Object.keys(out).some((k) => fields.includes(k));
    if (!placed) out._form = error.message;
    return out;
  }
  out._form = error instanceof Error ? error.message : String(error);
  return out;
}
