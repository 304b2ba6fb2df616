/** Content-addressed file store (interface in server/services.ts): the local-disk implementation and the factory. */
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import type { FileStore, FileStoreSettings } from '../services.js';
import { S3FileStore } from './store-s3.js';

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

/**
 * The file store the settings name: STORE_URL s3://… (S3-compatible, S3_ENDPOINT for non-AWS services),
 * file://… (a local folder), or `DATA_DIR/store`. The web server, the pool's worker threads and
 * `npm run worker` all open their store here. Static imports only: pool threads load this module through
 * tsx's CommonJS hook, where a dynamic import() would miss the .js → .ts resolution.
 */
export function createFileStore(settings: FileStoreSettings): FileStore {
  const url = settings.STORE_URL;
  if (url?.startsWith('s3://')) return S3FileStore.fromUrl(url, settings.S3_ENDPOINT);
  if (url?.startsWith('file://')) return new LocalFileStore(new URL(url).pathname);
  return new LocalFileStore(path.join(settings.DATA_DIR, 'store'));
}
