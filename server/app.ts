/** The Express app, built by a function so tests can create one per file on a fresh database. */
import express from 'express';
import cookieParser from 'cookie-parser';
import path from 'node:path';
import fs from 'node:fs';
import { fileURLToPath } from 'node:url';
import type { AppContext } from './context.js';
import { authenticate } from './auth/session.js';
import { errorMiddleware, notFoundApi, unauthorized } from './http/errors.js';
import { sameOriginWrites, securityHeaders } from './http/security.js';
import authRoutes from './routes/auth.js';
import peopleRoutes from './routes/people.js';
import studiesRoutes from './routes/studies.js';
import fieldsRoutes from './routes/fields.js';
import cellsRoutes from './routes/cells.js';
import recipesRoutes from './routes/recipes.js';
import instrumentsRoutes from './routes/instruments.js';
import runsRoutes from './routes/runs.js';
import cellTableRoutes from './routes/cell-table.js';
import compareRoutes from './routes/compare.js';
import reportsRoutes from './routes/reports.js';
import sharesRoutes from './routes/shares.js';
import outboxRoutes from './routes/outbox.js';
import tokensRoutes from './routes/tokens.js';
import apiReferenceRoutes from './routes/api-reference.js';
import notificationsRoutes from './routes/notifications.js';
import usageRoutes from './routes/usage.js';
import sampleSheetRoutes from './routes/sample-sheet.js';

const DEFAULT_CLIENT_DIR = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../dist/client');

export function createApp(ctx: AppContext) {
  const app = express();
  app.disable('x-powered-by');
  // TRUST_PROXY=1: exactly one reverse proxy in front; req.ip is the address it saw, req.secure its X-Forwarded-Proto
  app.set('trust proxy', ctx.env.TRUST_PROXY === '1' ? 1 : false);
  app.use(securityHeaders());
  app.use(cookieParser());
  app.use('/api', sameOriginWrites(ctx));
  app.use('/api', express.json({ limit: '2mb' }));
  app.use('/api', authenticate(ctx));
  // every finished write invalidates read caches (e.g. the review grid's index), except signing in and out and
  // personal tokens (they change no study data), and writes that moved the version themselves while patching
  // a cache in place (res.locals.dataVersionBumped)
  app.use('/api', (req, res, next) => {
    if (req.method !== 'GET' && req.method !== 'HEAD' && !/^\/(auth|tokens)(\/|$)/.test(req.path)) {
      res.on('finish', () => {
        if (!res.locals.dataVersionBumped) ctx.dataVersion++;
      });
    }
    next();
  });

  // everything under /api needs a session except the open routes (server/auth/route-rules.ts: public, invite-
  // and share-token routes); refusing before routing means an anonymous caller cannot tell which ids exist
  const OPEN = /^\/(health$|auth\/login$|auth\/logout$|auth\/invitations\/|shared\/)/;
  app.use('/api', (req, _res, next) => (req.user || OPEN.test(req.path) ? next() : next(unauthorized())));

  app.get('/api/health', (_req, res) => {
    res.json({ ok: true });
  });
  const api = express.Router();
  for (const r of [authRoutes, peopleRoutes, studiesRoutes, fieldsRoutes, cellsRoutes, recipesRoutes, instrumentsRoutes, runsRoutes, cellTableRoutes, compareRoutes, reportsRoutes, sharesRoutes, outboxRoutes, tokensRoutes, apiReferenceRoutes, notificationsRoutes, usageRoutes, sampleSheetRoutes]) {
    api.use(r(ctx));
  }
  app.use('/api', api);
  app.use('/api', notFoundApi);

  // the built client (npm start builds it first); any non-API path serves index.html
  const CLIENT_DIR = ctx.env.CLIENT_DIR ? path.resolve(ctx.env.CLIENT_DIR) : DEFAULT_CLIENT_DIR;
  if (fs.existsSync(path.join(CLIENT_DIR, 'index.html'))) {
    app.use(express.static(CLIENT_DIR, { index: false, maxAge: '1h' }));
    app.get(/^(?!\/api\/).*/, (_req, res) => res.sendFile(path.join(CLIENT_DIR, 'index.html')));
  }
  app.use(errorMiddleware);
  return app;
}
