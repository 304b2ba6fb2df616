/**
 * Path traversal on every file-serving route: field previews and pixels (files in the content-addressed
 * store), CSV downloads (cell table, comparison, report, shared report) and the static client. Requests are
 * written byte for byte on a raw socket so no client library normalises "..", "%2e%2e" or "%2f" away.
 * Attack strings: OWASP Web Security Testing Guide v4.2, WSTG-ATHZ-01 (directory traversal / file include).
 * A pass means: a 4xx, or the client's index.html (the SPA fallback) — never a byte of a file outside the folder.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import type { Server } from 'node:http';
import { makeTestApp, TEST_PASSWORD, type TestApp } from '../utils/app.js';
import { SESSION_COOKIE } from '../../server/auth/session.js';
import { buildLabA, type LabAEntities } from './world.js';

let t: TestApp;
let e: LabAEntities;
let server: Server;
let port: number;
let cookie: string;
let root: string;
const SECRET = 'TOP-SECRET-NEXT-TO-THE-CLIENT-' + Math.random().toString(36).slice(2);

beforeAll(async () => {
  root = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-sec-trav-'));
  const clientDir = path.join(root, 'client');
  fs.mkdirSync(path.join(clientDir, 'assets'), { recursive: true });
  fs.writeFileSync(path.join(clientDir, 'index.html'), '<!doctype html><title>Syntopy</title><div id="root"></div>');
  fs.writeFileSync(path.join(clientDir, 'assets', 'app.js'), 'console.log(1)');
  fs.writeFileSync(path.join(root, 'secret.txt'), SECRET);
  t = await makeTestApp({ CLIENT_DIR: clientDir });
  e = await buildLabA(t);
  cookie = await fetchLogin();
  server = t.app.listen(0, '127.0.0.1');
  await new Promise((r) => server.once('listening', r));
  port = (server.address() as net.AddressInfo).port;
}, 120_000);
afterAll(async () => {
  server?.close();
  await t?.close();
  fs.rmSync(root, { recursive: true, force: true });
});

async function fetchLogin() {
  const supertest = (await import('supertest')).default;
  const r = await supertest(t.app).post('/api/auth/login').send({ email: t.world.users.biologist.email, password: TEST_PASSWORD });
  return ([] as string[]).concat(r.headers['set-cookie']).find((c) => c.startsWith(SESSION_COOKIE))!.split(';')[0];
}

/** GET with the exact request target given (no normalisation). */
function raw(target: string, withCookie = true): Promise<{ status: number; body: string }> {
  return new Promise((resolve, reject) => {
    const s = net.connect(port, '127.0.0.1', () => {
      s.write(`GET ${target} HTTP/1.1\r\nHost: 127.0.0.1:${port}\r\n${withCookie ? `Cookie: ${cookie}\r\n` : ''}Connection: close\r\n\r\n`);
    });
    const chunks: Buffer[] = [];
    s.on('data', (d) => chunks.push(d));
    s.on('end', () => {
      const text = Buffer.concat(chunks).toString('latin1');
      const status = Number(/^HTTP\/1\.1 (\d{3})/.exec(text)?.[1] ?? 0);
      resolve({ status, body: text.slice(text.indexOf('\r\n\r\n') + 4) });
    });
    s.on('error', reject);
  });
}

/** Traversal payloads aimed at a file `depth` folders up, in the encodings WSTG-ATHZ-01 lists. */
function payloads(file: string, depth = 8) {
  const up = (sep: string, dots: string) => Array(depth).fill(dots).join(sep) + sep + file;
  return [
    up('/', '..'),
    up('%2f', '..'),
    up('%2F', '%2e%2e'),
    up('/', '%2e%2e'),
    up('%5c', '..'),
    up('\\', '..'),
    up('/', '%252e%252e'),
    up('/', '..%00'),
    up('/', '....'),
    up('%c0%af', '..'),
    '/' + file,
    file + '%00.png',
  ];
}

const forbiddenContent = () => [SECRET, 'root:x:0:0', 'SQLite format 3', fs.readFileSync(path.join(t.dataDir, 'session-secret'), 'utf8')];
const leaks = (body: string) => forbiddenContent().some((s) => body.includes(s));

describe('path traversal', () => {
  it('the static client never serves a file outside its folder', async () => {
    const bad: string[] = [];
    for (const file of ['secret.txt', 'etc/passwd', 'syntopy.db', 'session-secret']) {
      for (const p of payloads(file)) {
        for (const prefix of ['/', '/assets/', '/assets/..%2f', '/studies/']) {
          const target = (prefix + p).replace(/^\/\//, '/');
          const r = await raw(target);
          if (leaks(r.body)) bad.push(`${target} → ${r.status} LEAK`);
          else if (r.status >= 500) bad.push(`${target} → ${r.status}`);
        }
      }
    }
    expect(bad).toEqual([]);
    // sanity: the real asset is served
    expect((await raw('/assets/app.js')).body).toContain('console.log(1)');
  });

  it('previews and pixels take only ids: traversal in the id or the query is a 4xx', async () => {
    const bad: string[] = [];
    const targets: string[] = [];
    for (const p of payloads('etc/passwd', 6)) {
      targets.push(`/api/fields/${p}/preview.png`, `/api/fields/${e.fieldId}%2f${p}/preview.png`, `/api/fields/${p}/pixels`);
      targets.push(`/api/fields/${e.fieldId}/preview.png?view=${p}`, `/api/fields/${e.fieldId}/preview.png?z=${p}`, `/api/fields/${e.fieldId}/pixels?z=${p}`);
    }
    for (const target of targets) {
      const r = await raw(target);
      if (leaks(r.body) || r.status < 400 || r.status >= 500) bad.push(`${target} → ${r.status}`);
    }
    expect(bad).toEqual([]);
    // sanity: the real preview works
    const ok = await raw(`/api/fields/${e.fieldId}/preview.png?max=32`);
    expect(ok.status).toBe(200);
    expect(ok.body.startsWith('\x89PNG')).toBe(true);
  });

  it('CSV downloads take only known table names and ids', async () => {
    const bad: string[] = [];
    const targets: string[] = [];
    for (const p of payloads('etc/passwd', 6)) {
      targets.push(
        `/api/reports/${e.reportId}/csv/${p}`,
        `/api/reports/${p}/csv/cells`,
        `/api/shared/${e.shareToken}/csv/${p}`,
        `/api/shared/${p}/csv/cells`,
        `/api/studies/${p}/cells.csv`,
        `/api/studies/${e.studyId}/cells.csv?columns=${p}`,
        `/api/studies/${p}/compare/cells.csv`,
      );
    }
    for (const target of targets) {
      const r = await raw(target);
      if (leaks(r.body) || r.status < 400 || r.status >= 500) bad.push(`${target} → ${r.status} ${r.body.slice(0, 80)}`);
    }
    expect(bad).toEqual([]);
    const ok = await raw(`/api/reports/${e.reportId}/csv/cells`);
    expect(ok.status).toBe(200);
  });

  it('download file names cannot be steered into a path (Content-Disposition stays one safe name)', async () => {
    const agent = await t.login('biologist');
    await agent.patch(`/api/studies/${e.studyId}`).send({ name: '../../etc/evil"\r\nX-Injected: 1' }).catch(() => undefined);
    const r = await raw(`/api/studies/${e.studyId}/cells.csv`);
    const head = await new Promise<string>((resolve) => {
      const s = net.connect(port, '127.0.0.1', () => s.write(`GET /api/studies/${e.studyId}/cells.csv HTTP/1.1\r\nHost: x\r\nCookie: ${cookie}\r\nConnection: close\r\n\r\n`));
      let buf = '';
      s.on('data', (d) => (buf += d.toString('latin1')));
      s.on('end', () => resolve(buf.slice(0, buf.indexOf('\r\n\r\n'))));
    });
    expect(r.status).toBe(200);
    expect(head).not.toMatch(/^X-Injected/im);
    const cd = /content-disposition: (.*)/i.exec(head)?.[1] ?? '';
    expect(cd).not.toMatch(/\.\.\/|\/etc\//);
  });
});
