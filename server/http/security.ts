/** Security middleware: helmet headers and a same-origin check on state-changing API requests. */
import helmet from 'helmet';
import type { RequestHandler } from 'express';
import type { AppContext } from '../context.js';
import { forbidden } from './errors.js';
import { isBearerRequest } from '../auth/tokens.js';

export function securityHeaders(): RequestHandler {
  return helmet({
    contentSecurityPolicy: {
      useDefaults: true,
      directives: {
        'default-src': ["'self'"],
        'img-src': ["'self'", 'data:', 'blob:'],
        'worker-src': ["'self'", 'blob:'],
        'style-src': ["'self'", "'unsafe-inline'"],
        'connect-src': ["'self'"],
        'font-src': ["'self'"],
        'object-src': ["'none'"],
        'frame-ancestors': ["'none'"],
        'upgrade-insecure-requests': null,
      },
    },
    crossOriginEmbedderPolicy: false,
    referrerPolicy: { policy: 'same-origin' },
  });
}

const UNSAFE = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);

/**
 * Rejects state-changing requests whose Origin (or, lacking it, Referer) names another site.
 * Requests without either header (curl, server-to-server, tests) pass: the SameSite=Lax cookie already
 * keeps cross-site form posts from carrying a session. Requests with `Authorization: Bearer …` pass too, and only
 * they: they are authenticated by the token alone, never by the cookie (server/auth/session.ts), and a browser
 * cannot add that header to a cross-site request without a CORS preflight, which this server never grants.
 */
export function sameOriginWrites(ctx: AppContext): RequestHandler {
  const allowed = new Set<string>();
  if (ctx.env.PUBLIC_URL) allowed.add(new URL(ctx.env.PUBLIC_URL).origin);
  return (req, _res, next) => {
    if (!UNSAFE.has(req.method) || isBearerRequest(req)) return next();
    const raw = req.get('origin') ?? (req.get('referer') ? safeOrigin(req.get('referer')!) : undefined);
    if (!raw) return next();
    const own = `${req.protocol}://${req.get('host')}`;
    if (raw === own || allowed.has(raw)) return next();
    // the Vite dev server proxies /api from another port on the same host
    if (ctx.env.NODE_ENV === 'development' && /^http:\/\/(localhost|127\.0\.0\.1):5173$/.test(raw)) return next();
    next(forbidden(`cross-site request refused: origin ${JSON.stringify(raw)} is not this site`));
  };
}

function safeOrigin(u: string) {
  try {
    return new URL(u).origin;
  } catch {
    return 'invalid';
  }
}
