/** Helpers for intake API tests: state snapshots (store keys, table counts, temp files). */
import fs from 'node:fs';
import path from 'node:path';
import type { TestApp } from '../utils/app.js';

export interface Snapshot {
  store: string[];
  rows: Record<string, number>;
  temps: string[];
}

export async function snapshot(t: TestApp): Promise<Snapshot> {
  const rows: Record<string, number> = {};
  for (const table of ['files', 'fields', 'cells', 'audit_events']) {
    rows[table] = (t.ctx.db.$client.prepare(`select count(*) as n from ${table}`).get() as { n: number }).n;
  }
  const tmp = path.join(t.dataDir, 'tmp');
  const temps: string[] = [];
  const walk = (d: string) => {
    for (const e of fs.existsSync(d) ? fs.readdirSync(d, { withFileTypes: true }) : []) {
      if (e.isDirectory()) walk(path.join(d, e.name));
      else temps.push(path.join(d, e.name));
    }
  };
  walk(tmp);
  return { store: (await t.ctx.store.list()).sort(), rows, temps };
}
