/** Fetch wrapper: JSON in/out, zod-validated responses, errors carry the server's message and field issues. */
import type { ZodType } from 'zod';

export class ApiError extends Error {
  constructor(public status: number, message: string, public issues: { path: string; message: string }[] = [], public body: unknown = null) {
    super(message);
  }
  /** message for one form field, from the server's zod issues */
  fieldError(path: string) {
    return this.issues.find((i) => i.path === path)?.message;
  }
}

export async function api<T>(path: string, opts: { method?: string; body?: unknown; schema?: ZodType<T>; signal?: AbortSignal } = {}): Promise<T> {
  const isForm = typeof FormData !== 'undefined' && opts.body instanceof FormData;
  const res = await fetch(`/api${path}`, {
    method: opts.method ?? (opts.body === undefined ? 'GET' : 'POST'),
    headers: opts.body === undefined || isForm ? undefined : { 'content-type': 'application/json' },
    body: opts.body === undefined ? undefined : isForm ? (opts.body as FormData) : JSON.stringify(opts.body),
    credentials: 'same-origin',
    signal: opts.signal,
  });
  const text = await res.text();
  let data: unknown = null;
  try {
    data = text ? JSON.parse(text) : null;
  } catch {
    data = null;
  }
  if (!res.ok) {
    const d = (data ?? {}) as { error?: string; issues?: { path: string; message: string }[] };
    throw new ApiError(res.status, d.error ?? `request failed (${res.status})`, d.issues ?? [], data);
  }
  return opts.schema ? opts.schema.parse(data) : (data as T);
}

/**
 * Download a file answer of the API: saved under the server's content-disposition name (else `fallbackName`);
 * a refusal throws ApiError with the server's message instead of saving the error as a file.
 */
export async function downloadFile(path: string, fallbackName: string): Promise<void> {
  const res = await fetch(`/api${path}`, { credentials: 'same-origin' });
  if (!res.ok) {
    let d: { error?: string } = {};
    try {
      d = (await res.json()) as { error?: string };
    } catch {
      d = {};
    }
    throw new ApiError(res.status, d.error ?? `download failed (${res.status})`);
  }
  const name = /filename="([^"]+)"/.exec(res.headers.get('content-disposition') ?? '')?.[1] ?? fallbackName;
  const url = URL.createObjectURL(await res.blob());
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  document.body.appendChild(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 0);
}
