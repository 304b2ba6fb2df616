/** Content-addressed file store: an interface with a local-disk implementation (S3 added by the runs work). */
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import type { AppContext } from '../context.js';

export interface FileStore {
  readonly kind: 'local' | 's3';
  /** Moves (or uploads) a finished local temp file to `key`. Idempotent when the key exists. */
  putFile(key: string, localPath: string): Promise<void>;
  has(key: string): Promise<boolean>;
  get(key: string): Promise<Buffer>;
  delete(key: string): Promise<void>;
  /** every key in the store (for fault tests) */
  list(): Promise<string[]>;
}

export class LocalFileStore implements FileStore {
  readonly kind = 'local' as const;
  constructor(readonly root: string) {
    fs.mkdirSync(root, { recursive: true });
  }
  private pathOf(key: string) {
    if (!/^[a-z0-9][a-z0-9._/-]*$/i.test(key) || key.includes('..')) throw new Error(`invalid store key ${JSON.stringify(key)}`);
    return path.join(this.root, key);
  }
  async putFile(key: string, localPath: string) {
    const dest = this.pathOf(key);
    if (fs.existsSync(dest)) {
      await fsp.rm(localPath, { force: true });
      return;
    }
    await fsp.mkdir(path.dirname(dest), { recursive: true });
    try {
      await fsp.rename(localPath, dest);
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'EXDEV') throw e;
      await fsp.copyFile(localPath, dest + '.part');
      await fsp.rename(dest + '.part', dest);
      await fsp.rm(localPath, { force: true });
    }
  }
  async has(key: string) {
    return fs.existsSync(this.pathOf(key));
  }
  async get(key: string) {
    return fsp.readFile(this.pathOf(key));
  }
  async delete(key: string) {
    await fsp.rm(this.pathOf(key), { force: true });
  }
  async list() {
    const out: string[] = [];
    const walk = async (dir: string, prefix: string) => {
      for (const e of await fsp.readdir(dir, { withFileTypes: true }).catch(() => [])) {
        if (e.isDirectory()) await walk(path.join(dir, e.name), prefix + e.name + '/');
        else if (!e.name.endsWith('.part')) out.push(prefix + e.name);
      }
    };
    await walk(this.root, '');
    return out;
  }
}

/** Key of a file with this SHA-256 (fanned out by the first two hex digits). */
export const keyForSha = (sha: string) => `${sha.slice(0, 2)}/${sha}.tif`;

export async function createFileStore(ctx: Pick<AppContext, 'env'>): Promise<FileStore> {
  const url = ctx.env.STORE_URL;
  if (url?.startsWith('s3://')) {
    const { S3FileStore } = await import('./store-s3.js');
    return S3FileStore.fromUrl(url, ctx.env.S3_ENDPOINT);
  }
  if (url?.startsWith('file://')) return new LocalFileStore(new URL(url).pathname);
  return new LocalFileStore(path.join(ctx.env.DATA_DIR, 'store'));
}
