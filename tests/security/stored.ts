/**
 * What an upload leaves behind, for the security tests that check a refused upload stores nothing: the
 * files / fields / cells rows, the store's objects and the temp files under DATA_DIR/tmp. And the one way
 * these tests post TIFF files to the field upload route (POST /api/coverslips/:id/fields).
 */
import fs from 'node:fs';
import path from 'node:path';
import type { TestApp } from '../utils/app.js';

export interface Stored {
  files: number;
  fields: number;
  cells: number;
  store: number;
  /** names of the files under DATA_DIR/tmp */
  temps: string[];
}

export async function storedState(t: TestApp): Promise<Stored> {
  const q = (table: string) => (t.ctx.db.$client.prepare(`select count(*) as n from ${table}`).get() as { n: number }).n;
  const temps: string[] = [];
  const walk = (d: string) => {
    for (const e of fs.existsSync(d) ? fs.readdirSync(d, { withFileTypes: true }) : []) (e.isDirectory() ? walk(path.join(d, e.name)) : temps.push(e.name));
  };
  walk(path.join(t.dataDir, 'tmp'));
  return { files: q('files'), fields: q('fields'), cells: q('cells'), store: (await t.ctx.store.list()).length, temps };
}

type Agent = Awaited<ReturnType<TestApp['login']>>;

/** Posts `files` (as image/tiff parts named "files") to lab A's first coverslip. */
export function uploadTiffs(t: TestApp, agent: Agent, files: { name: string; bytes: Buffer }[]) {
  let req = agent.post(`/api/coverslips/${t.world.coverslipA}/fields`);
  for (const f of files) req = req.attach('files', f.bytes, { filename: f.name, contentType: 'image/tiff' });
  return req;
}
