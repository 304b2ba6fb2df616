/**
 * Personal API tokens: a script acts as its owner with `Authorization: Bearer syt_…`, within the token's scope.
 * Server: server/routes/tokens.ts and server/auth/tokens.ts; client: src/features/tokens.
 *
 *   POST   /tokens      CreateTokenRequest → CreatedToken (201; the secret is shown this once; cookie session only)
 *   GET    /tokens      → TokenListResponse (the caller's tokens, never a secret; cookie session only)
 *   DELETE /tokens/:id  → TokenSummary (revoked at once; cookie session only)
 */
import { z } from 'zod';
import { Id, IsoDate } from './common.js';

/** Every token starts with this, so a leaked one is recognisable (e.g. by secret scanners) and never taken for a session. */
export const TOKEN_PREFIX = 'syt_';
export const MAX_TOKEN_DAYS = 365;
export const MAX_TOKEN_NAME = 80;
export const TOKEN_SCOPES = ['read', 'write'] as const;
export const TokenScope = z.enum(TOKEN_SCOPES, { error: (iss) => `scope must be "read" or "write", got ${JSON.stringify(iss.input ?? null)}` });
export type TokenScope = z.infer<typeof TokenScope>;

const quote = (v: unknown) => JSON.stringify(v ?? null);

export const CreateTokenRequest = z.object({
  name: z
    .string({ error: (iss) => `name must be text naming what the token is for, got ${quote(iss.input)}` })
    .trim()
    .min(1, 'enter a name saying what the token is for (e.g. "plate-reader script")')
    .max(MAX_TOKEN_NAME, { error: (iss) => `a token name has at most ${MAX_TOKEN_NAME} characters, got ${String(iss.input).length}` }),
  scope: TokenScope,
  expiresInDays: z
    .number({ error: (iss) => `expiresInDays must be a whole number of days from 1 to ${MAX_TOKEN_DAYS}, got ${quote(iss.input)}` })
    .int({ error: (iss) => `expiresInDays must be a whole number of days, got ${quote(iss.input)}` })
    .min(1, { error: (iss) => `expiresInDays must be at least 1, got ${quote(iss.input)}` })
    .max(MAX_TOKEN_DAYS, { error: (iss) => `expiresInDays must be at most ${MAX_TOKEN_DAYS}, got ${quote(iss.input)}` }),
});
export type CreateTokenRequest = z.input<typeof CreateTokenRequest>;

export const TokenState = z.enum(['active', 'expired', 'revoked']);
export type TokenState = z.infer<typeof TokenState>;

export const TokenSummary = z.object({
  id: Id,
  name: z.string(),
  scope: TokenScope,
  /** the first characters of the token ("syt_AbCd"), enough to recognise it, far too few to use it */
  hint: z.string(),
  state: TokenState,
  createdAt: IsoDate,
  expiresAt: IsoDate,
  /** the last request made with it; written at most once a minute, so up to a minute behind */
  lastUsedAt: IsoDate.nullable(),
  revokedAt: IsoDate.nullable(),
});
export type TokenSummary = z.infer<typeof TokenSummary>;

export const TokenListResponse = z.object({ tokens: z.array(TokenSummary) });
export type TokenListResponse = z.infer<typeof TokenListResponse>;

export const CreatedToken = z.object({
  id: Id,
  /** the whole secret token; the server keeps only its SHA-256 and cannot show it again */
  token: z.string().startsWith(TOKEN_PREFIX),
  summary: TokenSummary,
});
export type CreatedToken = z.infer<typeof CreatedToken>;
