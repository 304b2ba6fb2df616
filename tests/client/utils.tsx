/**
 * Client test helpers: a fetch stub that answers /api routes from a table, and a renderer with a fresh
 * QueryClient and an in-memory router. DOM tests declare `// @vitest-environment jsdom` per file.
 */
import { afterEach, vi } from 'vitest';
import { cleanup, render } from '@testing-library/react';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { createMemoryRouter, RouterProvider, type RouteObject } from 'react-router';
import type { MeUser } from '@shared/schemas/auth';

afterEach(() => {
  cleanup();
  vi.unstubAllGlobals();
});

export type Call = { method: string; path: string; body: unknown };
export type Handler = (call: Call) => { status?: number; body: unknown } | undefined;

/** Stubs fetch: the first handler that answers a call wins; unanswered calls get 404 JSON. Returns the log of calls. */
export function mockApi(...handlers: Handler[]) {
  const calls: Call[] = [];
  const fetchStub = vi.fn(async (input: RequestInfo | URL, init?: RequestInit) => {
    const url = typeof input === 'string' ? input : input instanceof URL ? input.href : input.url;
    const path = url.replace(/^https?:\/\/[^/]+/, '').replace(/^\/api/, '');
    const call: Call = { method: (init?.method ?? 'GET').toUpperCase(), path, body: init?.body ? JSON.parse(String(init.body)) : undefined };
    calls.push(call);
    for (const h of handlers) {
      const r = h(call);
      if (r) return new Response(JSON.stringify(r.body), { status: r.status ?? 200, headers: { 'content-type': 'application/json' } });
    }
    return new Response(JSON.stringify({ error: `no mock for ${call.method} ${path}` }), { status: 404, headers: { 'content-type': 'application/json' } });
  });
  vi.stubGlobal('fetch', fetchStub);
  return calls;
}

/** Answers one method + path (string equality or a regular expression on the path). */
export const on =
  (method: string, path: string | RegExp, reply: (call: Call) => { status?: number; body: unknown }): Handler =>
  (call) =>
    call.method === method && (typeof path === 'string' ? call.path === path : path.test(call.path)) ? reply(call) : undefined;

export const asUser = (user: MeUser | null): Handler =>
  on('GET', '/auth/me', () => (user ? { body: { user } } : { status: 401, body: { error: 'sign in first' } }));

export const demoUser = (roles: MeUser['roles'], over: Partial<MeUser> = {}): MeUser => ({ id: 7, email: 'someone@demo.test', name: 'Ada Demo', roles, ...over });

/** Renders routes in a memory router at `path`, with a fresh QueryClient (no retries). */
export function renderRoutes(routes: RouteObject[], path: string) {
  const qc = new QueryClient({ defaultOptions: { queries: { retry: false, staleTime: Infinity }, mutations: { retry: false } } });
  const router = createMemoryRouter(routes, { initialEntries: [path] });
  const utils = render(
    <QueryClientProvider client={qc}>
      <RouterProvider router={router} />
    </QueryClientProvider>,
  );
  return { ...utils, router, qc };
}
