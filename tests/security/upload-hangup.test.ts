/**
 * A client that hangs up in the middle of an upload is an ordinary event: the server logs one info line,
 * logs no error, stores nothing (no files/fields rows, no store object, no temp file) and keeps serving.
 * Checked for the field upload and the label import, over a real socket.
 */
import http from 'node:http';
import net from 'node:net';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { makeTestApp, TEST_PASSWORD, type TestApp } from '../utils/app.js';
import { tiffPages, twoChannels } from './tiff.js';
import { storedState } from './stored.js';

let t: TestApp;
let server: http.Server;
let port: number;
let cookie: string;
beforeAll(async () => {
  t = await makeTestApp();
  server = http.createServer(t.app);
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
  port = (server.address() as AddressInfo).port;
  const res = await fetch(`http://127.0.0.1:${port}/api/auth/login`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', origin: `http://127.0.0.1:${port}` },
    body: JSON.stringify({ email: t.world.users.microscopist.email, password: TEST_PASSWORD }),
  });
  expect(res.status).toBe(200);
  cookie = res.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ');
});
afterAll(async () => {
  await new Promise((r) => server.close(r));
  await t?.close();
});

/** Sends the headers and the first `sent` bytes of a multipart body declared as `declared` bytes, then hangs up. */
async function hangUp(url: string, part: string, file: Buffer) {
  const boundary = 'xHangUpBoundary';
  const head = Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="${part}"; filename="big.tif"\r\nContent-Type: image/tiff\r\n\r\n`);
  const tail = Buffer.from(`\r\n--${boundary}--\r\n`);
  const declared = head.length + file.length + tail.length;
  const sock = net.connect(port, '127.0.0.1');
  await new Promise<void>((r) => sock.once('connect', () => r()));
  sock.write(
    `POST ${url} HTTP/1.1\r\nHost: 127.0.0.1:${port}\r\nOrigin: http://127.0.0.1:${port}\r\nCookie: ${cookie}\r\n` +
      `Content-Type: multipart/form-data; boundary=${boundary}\r\nContent-Length: ${declared}\r\n\r\n`,
  );
  sock.write(head);
  sock.write(file.subarray(0, file.length >> 1));
  // let the server start streaming the part to disk, then hang up
  await new Promise((r) => setTimeout(r, 300));
  sock.destroy();
}

async function settle(check: () => Promise<boolean>) {
  for (let i = 0; i < 100; i++) {
    if (await check()) return;
    await new Promise((r) => setTimeout(r, 50));
  }
}

describe('a client hanging up mid-upload', () => {
  const [a, c] = twoChannels(512, 512);
  const file = tiffPages(512, 512, [a, c]);

  it('field upload: one info line, no error, nothing stored, server still serving', async () => {
    const info = vi.spyOn(console, 'info');
    const before = await storedState(t);
    await hangUp(`/api/coverslips/${t.world.coverslipA}/fields`, 'files', file);
    await settle(async () => info.mock.calls.length > 0 && (await storedState(t)).temps.length === 0);
    await new Promise((r) => setTimeout(r, 200));
    expect(await storedState(t)).toEqual(before);
    const lines = info.mock.calls.map((x) => x.join(' '));
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^\[syntopy\] the client closed the connection during POST \/api\/coverslips\/\d+\/fields; nothing was stored$/);
    const health = await fetch(`http://127.0.0.1:${port}/api/health`);
    expect(health.status).toBe(200);
  });

  it('label import: the same', async () => {
    const agent = await t.login('microscopist');
    const up = await agent.post(`/api/coverslips/${t.world.coverslipA}/fields`).attach('files', tiffPages(16, 16, twoChannels(16, 16)), 'f.tif');
    expect(up.status).toBe(201);
    const fieldId = up.body.results[0].field.id;
    const info = vi.spyOn(console, 'info');
    const before = await storedState(t);
    await hangUp(`/api/fields/${fieldId}/cells/import`, 'file', file);
    await settle(async () => info.mock.calls.length > 0);
    await new Promise((r) => setTimeout(r, 200));
    expect(await storedState(t)).toEqual(before);
    const lines = info.mock.calls.map((x) => x.join(' '));
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^\[syntopy\] the client closed the connection during POST \/api\/fields\/\d+\/cells\/import; nothing was stored$/);
  });
});
