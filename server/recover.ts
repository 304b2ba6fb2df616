/**
 * Start-up clean-up after an unclean stop (crash, SIGKILL, power loss). Runs once in server/index.ts before the
 * server accepts requests, so nothing is in flight:
 *   - DATA_DIR/tmp (upload temp files, copies being moved into the store) is emptied;
 *   - half-written `*.part` files in the local store and the preview cache are removed;
 *   - local store objects without a `files` row are removed: intake (server/images/intake.ts) moves a file into
 *     the store first and writes its row after, so a crash between the two leaves exactly such an object.
 * S3-compatible stores are left alone here (listing a shared bucket at every start is too costly; their
 * orphans are harmless and unreachable).
 */
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import type { AppContext } from './context.js';
import { files } from './db/schema.js';
import { LocalFileStore } from './images/store.js';

export interface RecoveryReport {
  tempFiles: number;
  partFiles: number;
  orphanObjects: number;
}

async function walk(dir: string, out: string[] = []): Promise<string[]> {
  for (const e of await fsp.readdir(dir, { withFileTypes: true }).catch(() => [])) {
    const p = path.join(dir, e.name);
    if (e.isDirectory()) await walk(p, out);
    else out.push(p);
  }
  return out;
}

export async function recoverAfterCrash(ctx: Pick<AppContext, 'env' | 'db' | 'store'>): Promise<RecoveryReport> {
  const report: RecoveryReport = { tempFiles: 0, partFiles: 0, orphanObjects: 0 };
  const tmp = path.join(ctx.env.DATA_DIR, 'tmp');
  for (const p of await walk(tmp)) {
    await fsp.rm(p, { force: true });
    report.tempFiles++;
  }
  for (const p of await walk(path.join(ctx.env.DATA_DIR, 'cache'))) {
    if (p.endsWith('.part')) {
      await fsp.rm(p, { force: true });
      report.partFiles++;
    }
  }
  const store = ctx.store;
  if (store instanceof LocalFileStore && fs.existsSync(store.root)) {
    const known = new Set(ctx.db.select({ key: files.storeKey }).from(files).all().map((f) => f.key));
    for (const p of await walk(store.root)) {
      const key = path.relative(store.root, p).split(path.sep).join('/');
      if (p.endsWith('.part')) {
        await fsp.rm(p, { force: true });
        report.partFiles++;
      } else if (!known.has(key)) {
        await fsp.rm(p, { force: true });
        report.orphanObjects++;
      }
    }
  }
  const n = report.tempFiles + report.partFiles + report.orphanObjects;
  if (n) console.log(`Syntopy removed ${n} leftover file(s) of work interrupted by the last stop (${report.tempFiles} temporary, ${report.partFiles} partial, ${report.orphanObjects} unreferenced in the store)`);
  return report;
}
