/** HTTP errors and the one error middleware that turns every thrown error into a 4xx/5xx JSON body. */
import type { ErrorRequestHandler, RequestHandler } from 'express';
import { ZodError, type ZodType } from 'zod';

export class HttpError extends Error {
  constructor(public readonly status: number, message: string, public readonly details?: Record<string, unknown>) {
    super(message);
    this.name = 'HttpError';
  }
}
export const badRequest = (m: string, d?: Record<string, unknown>) => new HttpError(400, m, d);
export const unauthorized = (m = 'sign in first') => new HttpError(401, m);
export const forbidden = (m = 'you may not do this') => new HttpError(403, m);
export const notFound = (m = 'not found') => new HttpError(404, m);
export const conflict = (m: string) => new HttpError(409, m);
export const gone = (m: string) => new HttpError(410, m);

/** Parse with a zod schema; a failure becomes a 400 naming the field and what was expected. */
export function parse<T>(schema: ZodType<T>, value: unknown): T {
  const r = schema.safeParse(value, { reportInput: true });
  if (r.success) return r.data;
  throw r.error;
}

/** Fields whose values are never repeated back, not even in an error message. */
const SECRET_PATH = /password|token|secret/i;

/** The value a request sent, as a short JSON excerpt for an error message; null for nothing sent or for a list
 * or object (the message of a refused list names the element at fault itself). */
function received(input: unknown): string | null {
  if (input === undefined || (typeof input === 'object' && input !== null)) return null;
  // request values come from JSON or a query string: never cyclic, never BigInt
  const text = JSON.stringify(input) ?? String(input);
  return text.length > 80 ? `${text.slice(0, 77)}...` : text;
}

function describeZod(err: ZodError) {
  const issues = err.issues.map((i) => {
    const path = i.path.join('.');
    const got = SECRET_PATH.test(path) ? null : received((i as { input?: unknown }).input);
    // zod's own messages name only the expected type or range; messages of our own quote the value themselves
    const quotes = i.code === 'custom' || (got !== null && i.message.includes(got)) || /\b(received|got)\b/.test(i.message);
    const quoted = got !== null && !quotes ? `${i.message} (received ${got})` : i.message;
    return { path, message: quoted };
  });
  const first = issues[0];
  return { error: first ? `${first.path || 'body'}: ${first.message}` : 'invalid request', issues };
}

export const notFoundApi: RequestHandler = (req, _res, next) => next(notFound(`no API route ${req.method} ${req.path}`));

/** Bodies up to this size are read to the end before an early refusal is sent, so the client sees the answer. */
const DRAIN_LIMIT = 64 * 1024 * 1024;

/**
 * The one error middleware. When a request is refused before its body was read (e.g. an upload to a
 * coverslip the user may not see), a client still sending would get a broken pipe instead of the answer:
 * a modest body is read to the end and discarded first; a large one gets the answer with Connection: close.
 */
export const errorMiddleware: ErrorRequestHandler = (err, req, res, next) => {
  if (res.headersSent) return;
  // a client that hangs up mid-body is an ordinary event: no answer can reach it, nothing to report
  if (!req.complete && (req.readableAborted || req.destroyed || req.socket?.destroyed)) {
    console.info(`[syntopy] the client closed the connection during ${req.method} ${req.originalUrl.split('?')[0]}; nothing was stored`);
    return;
  }
  const unread = !req.complete && req.readable && !req.readableEnded;
  if (unread) {
    const declared = Number(req.headers['content-length'] ?? NaN);
    if (Number.isFinite(declared) && declared <= DRAIN_LIMIT) {
      req.on('end', () => answer(err, req, res, next));
      req.on('error', () => answer(err, req, res, next));
      req.resume();
      return;
    }
    res.setHeader('Connection', 'close');
  }
  answer(err, req, res, next);
};

const answer: ErrorRequestHandler = (err, req, res, _next) => {
  if (res.headersSent) return;
  if (err instanceof ZodError) return res.status(400).json(describeZod(err));
  if (err instanceof HttpError) return res.status(err.status).json({ error: err.message, ...(err.details ?? {}) });
  const e = err as { name?: string; status?: number; statusCode?: number; message?: string; type?: string; code?: string };
  if (e?.name === 'ImageInputError') return res.status(e.status ?? 422).json({ error: e.message });
  if (e?.name === 'MulterError') {
    const status = e.code === 'LIMIT_FILE_SIZE' ? 413 : 400;
    return res.status(status).json({ error: `upload refused: ${e.message}` });
  }
  if (e?.type === 'entity.parse.failed') return res.status(400).json({ error: 'the request body is not valid JSON' });
  if (e?.type === 'entity.too.large') return res.status(413).json({ error: 'the request body is too large' });
  const status = e?.status ?? e?.statusCode;
  if (typeof status === 'number' && status >= 400 && status < 500) return res.status(status).json({ error: e.message ?? 'bad request' });
  console.error('[syntopy] unexpected error', err);
  return res.status(500).json({ error: 'something went wrong on the server; the error was logged' });
};

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    interface Request {
      log?: (e: unknown) => void;
    }
  }
}
