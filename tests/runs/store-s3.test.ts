/** The S3 file store against s3rver on loopback: the same contract as the local store (server/images/store.ts). */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { S3FileStore } from '../../server/images/store-s3.js';
import { createFileStore } from '../../server/images/store.js';
import { startS3 } from './services.js';

let s3: Awaited<ReturnType<typeof startS3>>;
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-s3t-'));
beforeAll(async () => {
  s3 = await startS3('bucket-a');
});
afterAll(async () => {
  await s3?.stop();
  fs.rmSync(tmp, { recursive: true, force: true });
});

const file = (name: string, body: string) => {
  const p = path.join(tmp, name);
  fs.writeFileSync(p, body);
  return p;
};

describe('S3FileStore', () => {
  it('is chosen by STORE_URL=s3://… and keeps put/has/get/delete/list semantics under a prefix', async () => {
    const store = createFileStore({ DATA_DIR: tmp, STORE_URL: 's3://bucket-a/pre/fix', S3_ENDPOINT: s3.endpoint });
    expect(store.kind).toBe('s3');
    const p = file('a.tif', 'hello tiff');
    await store.putFile('ab/abc.tif', p);
    expect(fs.existsSync(p)).toBe(false); // moved, like the local store
    expect(await store.has('ab/abc.tif')).toBe(true);
    expect(await store.has('ab/nope.tif')).toBe(false);
    expect((await store.get('ab/abc.tif')).toString()).toBe('hello tiff');
    // idempotent: an existing key is kept, the temp file removed
    const p2 = file('b.tif', 'other bytes');
    await store.putFile('ab/abc.tif', p2);
    expect(fs.existsSync(p2)).toBe(false);
    expect((await store.get('ab/abc.tif')).toString()).toBe('hello tiff');
    expect(await store.list()).toEqual(['ab/abc.tif']);
    await store.delete('ab/abc.tif');
    expect(await store.has('ab/abc.tif')).toBe(false);
    await expect(store.get('ab/abc.tif')).rejects.toThrow(/missing/);
    await expect(store.has('../etc/passwd')).rejects.toThrow(/invalid store key/);
  });
  it('refuses a malformed STORE_URL, quoting it', () => {
    expect(() => S3FileStore.fromUrl('s3://', s3.endpoint)).toThrow(/"s3:\/\/"/);
  });
});
