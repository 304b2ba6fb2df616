/**
 * The load test's database: one lab, one biologist, 2 conditions × 5 coverslips × (cells / 1,000) fields per
 * coverslip × 100 cells per field (1,000,000 cells → 10,000 fields), each cell measured once by one done run.
 *
 * Built fast: every row in one transaction with prepared statements and `synchronous = OFF` (the file is
 * throw-away until the build finishes, then it is renamed into place). The built file is kept in the system
 * temp folder keyed by a hash of the committed migrations, this file and the cell count, and copied into the
 * test's data folder, so a second run with the same schema skips the build.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import crypto from 'node:crypto';
import { fileURLToPath } from 'node:url';
import { performance } from 'node:perf_hooks';
import { MIGRATIONS_DIR, openDb } from '../../server/db/client.js';
import { keyForSha } from '../../server/images/store.js';

export const PASSWORD = 'load test passphrase';
export const EMAIL = 'load-biologist@load.test';
export const CELLS_PER_FIELD = 100;
export const CONDITIONS = 2;
export const SLIPS = 5;

export interface LoadDb {
  studyId: number;
  fieldIds: number[];
  cellCount: number;
  /** the field TIFF every field points at (content-addressed; the caller puts it into the store) */
  tif: Uint8Array;
  sha: string;
  /** seconds spent building (0 when reused) */
  buildSeconds: number;
  reused: boolean;
  /** size of the database file in bytes */
  bytes: number;
}

function cacheKey(cells: number) {
  const h = crypto.createHash('sha256');
  for (const f of fs.readdirSync(MIGRATIONS_DIR, { recursive: true }).map(String).sort()) {
    const p = path.join(MIGRATIONS_DIR, f);
    if (fs.statSync(p).isFile()) h.update(f).update(fs.readFileSync(p));
  }
  h.update(fs.readFileSync(fileURLToPath(import.meta.url)));
  h.update(String(cells));
  return h.digest('hex').slice(0, 16);
}

/**
 * Writes (or reuses) the database for `cells` cells at `dbFile`. `makeHash` gives the biologist's bcrypt hash
 * (stored in the cached file too, so it must be made with the production cost).
 */
export async function buildLoadDb(dbFile: string, cells: number, makeHash: () => Promise<string>): Promise<LoadDb> {
  const { tiffPages, twoChannels } = await import('../security/tiff.js');
  const W = 512, H = 512;
  const tif = tiffPages(W, H, twoChannels(W, H));
  const sha = crypto.createHash('sha256').update(tif).digest('hex');
  const cacheDir = path.join(os.tmpdir(), 'syntopy-load-cache');
  fs.mkdirSync(cacheDir, { recursive: true });
  const cached = path.join(cacheDir, `${cacheKey(cells)}.db`);
  const t0 = performance.now();
  let reused = fs.existsSync(cached);
  if (!reused) {
    const part = `${cached}.${process.pid}.part`;
    fs.rmSync(part, { force: true });
    const db = openDb(part);
    const s = db.$client;
    s.pragma('synchronous = OFF');
    const hash = await makeHash();
    fill(s, cells, tif.length, sha, hash, W, H);
    s.pragma('wal_checkpoint(TRUNCATE)');
    s.exec('ANALYZE');
    s.close();
    fs.rmSync(`${part}-wal`, { force: true });
    fs.rmSync(`${part}-shm`, { force: true });
    fs.renameSync(part, cached);
  }
  fs.copyFileSync(cached, dbFile);
  const buildSeconds = (performance.now() - t0) / 1000;
  const probe = openDb(dbFile).$client;
  const studyId = (probe.prepare("SELECT id FROM studies WHERE name = 'Load study'").get() as { id: number }).id;
  const fieldIds = (probe.prepare('SELECT id FROM fields ORDER BY id').raw().all() as [number][]).map((r) => r[0]);
  const cellCount = (probe.prepare('SELECT count(*) FROM cells').raw().get() as [number])[0];
  probe.close();
  return { studyId, fieldIds, cellCount, tif, sha, buildSeconds, reused, bytes: fs.statSync(dbFile).size };
}

function fill(db: import('better-sqlite3').Database, CELLS: number, tifSize: number, sha: string, hash: string, W: number, H: number) {
  const facts = JSON.stringify({ ch1: { min: 0, max: 4000, mean: 900, saturatedFraction: 0, plateauFraction: null }, ch2: { min: 0, max: 3000, mean: 700, saturatedFraction: 0, plateauFraction: null } });
  const fieldsTotal = Math.ceil(CELLS / CELLS_PER_FIELD);
  const perSlip = Math.ceil(fieldsTotal / (CONDITIONS * SLIPS));
  const geometry = Array.from({ length: CELLS_PER_FIELD }, (_, i) => JSON.stringify({ kind: 'rect', x: (i % 25) * 20, y: Math.floor(i / 25) * 20, width: 18, height: 18 }));
  const names = Array.from({ length: CELLS_PER_FIELD }, (_, i) => `Cell ${i + 1}`);
  db.transaction(() => {
    const lab = (db.prepare("INSERT INTO labs (name) VALUES ('Load lab') RETURNING id").get() as { id: number }).id;
    const user = (db.prepare("INSERT INTO users (email, name, password_hash, roles) VALUES (?, 'Load Biologist', ?, '[\"biologist\"]') RETURNING id").get(EMAIL, hash) as { id: number }).id;
    db.prepare('INSERT INTO lab_members (lab_id, user_id) VALUES (?, ?)').run(lab, user);
    const studyId = (db.prepare("INSERT INTO studies (lab_id, owner_id, name) VALUES (?, ?, 'Load study') RETURNING id").get(lab, user) as { id: number }).id;
    db.prepare("INSERT INTO files (sha256, size, store_key, original_name) VALUES (?, ?, ?, 'load-field.tif')").run(sha, tifSize, keyForSha(sha));
    const recipe = (db.prepare("INSERT INTO recipes (name, version, status, settings) VALUES ('Load recipe', 1, 'approved', '{}') RETURNING id").get() as { id: number }).id;
    db.prepare('UPDATE recipes SET family_id = id WHERE id = ?').run(recipe);
    const run = (db.prepare("INSERT INTO runs (study_id, recipe_id, scope_kind, scope_id, status) VALUES (?, ?, 'study', ?, 'done') RETURNING id").get(studyId, recipe, studyId) as { id: number }).id;
    const insCond = db.prepare('INSERT INTO conditions (study_id, name, position) VALUES (?, ?, ?)');
    const insSlip = db.prepare('INSERT INTO coverslips (condition_id, name, replicate, position) VALUES (?, ?, ?, ?)');
    const insField = db.prepare(
      `INSERT INTO fields (coverslip_id, name, file1_sha, file2_sha, channel1, channel2, channel_names, file_size, width, height, bit_depth, sample_format, facts)
       VALUES (?, ?, ?, ?, 1, 2, '[null,null]', ?, ?, ?, 16, 'uint', ?)`,
    );
    const insCell = db.prepare('INSERT INTO cells (field_id, name, geometry, pixel_count, excluded, exclusion_reason) VALUES (?, ?, ?, 400, ?, ?)');
    const insM = db.prepare(
      `INSERT INTO measurements (run_id, cell_id, field_id, pixels, pearson, spearman, kendall_tau_b, distance_correlation, manders_m1, manders_m2, overlap, k1, k2, icq,
         threshold1, threshold2, threshold_method, saturated_fraction1, saturated_fraction2, mean1, mean2, provenance)
       VALUES (?, ?, ?, 400, ?, ?, ?, ?, ?, ?, 0.5, 1, 1, ?, 200, 150, 'costes', ?, 0, ?, ?, '{}')`,
    );
    let k = 0;
    const rnd = () => (k = (k * 1103515245 + 12345) % 2147483648) / 2147483648;
    let cellCount = 0;
    for (let c = 0; c < CONDITIONS; c++) {
      const cond = Number(insCond.run(studyId, c === 0 ? 'untreated' : 'treated', c).lastInsertRowid);
      for (let s = 0; s < SLIPS; s++) {
        const slip = Number(insSlip.run(cond, `CS${s + 1}`, s + 1, s).lastInsertRowid);
        for (let f = 0; f < perSlip && cellCount < CELLS; f++) {
          const field = Number(insField.run(slip, `F${f + 1}`, sha, sha, tifSize, W, H, facts).lastInsertRowid);
          for (let i = 0; i < CELLS_PER_FIELD && cellCount < CELLS; i++, cellCount++) {
            const excluded = cellCount % 97 === 0 ? 1 : 0;
            const cell = Number(insCell.run(field, names[i], geometry[i], excluded, excluded ? 'out of focus' : null).lastInsertRowid);
            // values rounded to 3 decimals, so sorts meet ties that only the cell id breaks
            const r = Math.round(1000 * Math.max(-0.99, Math.min(0.99, 0.3 + 0.2 * c + 0.3 * (rnd() - 0.5)))) / 1000;
            insM.run(run, cell, field, r, r * 0.95, r * 0.7, Math.abs(r), 0.5 + r / 3, 0.4 + r / 4, r / 2, cellCount % 50 === 0 ? 0.02 : 0, 900 + 200 * rnd(), 700 + 100 * rnd());
          }
        }
      }
    }
  })();
}
