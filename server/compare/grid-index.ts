/**
 * The review grid's order and filter index: for one study and measurement source, the columns every sort and
 * filter reads (cell, field, flags, each numeric measure) as typed arrays, read once per data version, so that
 * any sort, filter, count or page is answered in memory instead of by a join and sort of every cell in SQL.
 *
 * What it answers is exactly what `gridFrom` + `orderBy` (source.ts) answer in SQL: the same rows (cells not
 * deleted, role 'cell', field ready, in the study; the source's latest measurement or none), the same order
 * (each sort's terms, NULLs last either way, ties by cell id ascending) and the same filters (SQLite's LIKE is
 * case-insensitive for ASCII letters only, and so is `q` here). tests/compare/grid-paging.test.ts compares
 * both for every sort key, direction and filter kind.
 *
 * Costs: building reads every cell and source measurement once (at 1,000,000 cells about 8 bytes per
 * numeric column per cell, ~230 MB, and several seconds); a new sort is a native sort of 64-bit integers
 * (key and row packed, `sortByKeys`; 4 bytes per cell kept); a new filter is one pass over
 * the sorted rows (none without filters). Pages by offset are O(1); pages after a cursor are a binary search.
 */
import type Database from 'better-sqlite3';
import { badRequest } from '../http/errors.js';
import { NUMERIC_COLUMNS, type GridFilters, type NumericColumn, type SortKey } from '../../shared/schemas/cell-table.js';
import { COLUMN_SQL, type ResolvedSource } from './source.js';

/** SQLite's LIKE folds only ASCII letters. */
const asciiLower = (s: string) => s.replace(/[A-Z]/g, (c) => String.fromCharCode(c.charCodeAt(0) + 32));

export interface GridIndex {
  n: number;
  /** per row (rows in cell id order) */
  cellId: Int32Array;
  field: Int32Array;
  excluded: Uint8Array;
  measured: Uint8Array;
  saturated: Uint8Array;
  /** NaN where NULL (no measurement, or the measure undefined) */
  cols: Record<NumericColumn | 'provisional', Float64Array>;
  /** id of the channel calibration the measurement applied (provenance), NaN when none (Compare warns on a mix) */
  calibration: Float64Array;
  /** per field index */
  fieldId: Int32Array;
  coverslipId: Int32Array;
  conditionId: Int32Array;
  /** field's rank in each text-keyed order (ties impossible: the tuple ends in an id) */
  fieldRank: { condition: Int32Array; coverslip: Int32Array; field: Int32Array };
  nameRank: Int32Array;
  /** distinct cell names in rank order (nameRank indexes it) */
  distinctNames: string[];
  rowOf: (cellId: number) => number;
  sorts: Map<string, Int32Array>;
  filtered: Map<string, Int32Array>;
}

/** The measurement columns read, in the order of `cols` then `calibration`. */
const MEASUREMENT_SELECT = [...NUMERIC_COLUMNS.map((k) => COLUMN_SQL[k]), 'm.provisional', "json_extract(m.provenance, '$.calibration.id')"].join(', ');

/** What is read from the database (everything but the lookups and caches built over it). */
export type GridData = Omit<GridIndex, 'rowOf' | 'sorts' | 'filtered'>;

/**
 * Reads the index of one study and source from the database (synchronous; cost above). With `fieldIds` it covers
 * only those fields (a request filtered to a few fields, e.g. one field's results, reads only their cells).
 */
export function readGridData(db: Database.Database, studyId: number, src: ResolvedSource, fieldIds?: number[]): GridData {
  const scope = fieldIds?.length ? `AND f.id IN (${fieldIds.map(() => '?').join(', ')})` : '';
  const scoped = fieldIds?.length ? fieldIds : [];
  const fieldsRows = db
    .prepare(
      `SELECT f.id, cs.id AS cs, cd.id AS cd FROM fields f JOIN coverslips cs ON cs.id = f.coverslip_id
       JOIN conditions cd ON cd.id = cs.condition_id AND cd.study_id = ? WHERE f.status = 'ready' ${scope}
       ORDER BY cd.position, cd.id, cs.position, cs.id, f.id`,
    )
    .raw()
    .all(studyId, ...scoped) as [number, number, number][];
  const nf = fieldsRows.length;
  const fieldId = Int32Array.from(fieldsRows, (r) => r[0]);
  const coverslipId = Int32Array.from(fieldsRows, (r) => r[1]);
  const conditionId = Int32Array.from(fieldsRows, (r) => r[2]);
  const fieldIdx = new Map<number, number>();
  fieldsRows.forEach((r, i) => fieldIdx.set(r[0], i));
  const condition = Int32Array.from({ length: nf }, (_, i) => i);
  const rankBy = (orderSql: string) => {
    const out = new Int32Array(nf);
    const ids = db
      .prepare(
        `SELECT f.id FROM fields f JOIN coverslips cs ON cs.id = f.coverslip_id JOIN conditions cd ON cd.id = cs.condition_id AND cd.study_id = ?
         WHERE f.status = 'ready' ${scope} ORDER BY ${orderSql}`,
      )
      .pluck()
      .all(studyId, ...scoped) as number[];
    ids.forEach((id, i) => (out[fieldIdx.get(id)!] = i));
    return out;
  };
  // coverslip order: (cs.name, cs.id); fields of one coverslip share its rank
  const coverslip = new Int32Array(nf);
  {
    const ids = db
      .prepare(
        `SELECT f.id, cs.id FROM fields f JOIN coverslips cs ON cs.id = f.coverslip_id JOIN conditions cd ON cd.id = cs.condition_id AND cd.study_id = ?
         WHERE f.status = 'ready' ${scope} ORDER BY cs.name, cs.id`,
      )
      .raw()
      .all(studyId, ...scoped) as [number, number][];
    let rank = -1;
    let last = -1;
    for (const [f, cs] of ids) {
      if (cs !== last) (rank++, (last = cs));
      coverslip[fieldIdx.get(f)!] = rank;
    }
  }
  const fieldOrder = rankBy('f.name, f.id');

  // cells: rows in id order, so a stable sort leaves ties in cell id order
  const cellIds: number[] = [];
  const fieldOf: number[] = [];
  const excl: number[] = [];
  const names: string[] = [];
  const cellStmt = db
    .prepare(
      `SELECT c.id, c.field_id, c.excluded, c.name FROM cells c JOIN fields f ON f.id = c.field_id AND f.status = 'ready'
       JOIN coverslips cs ON cs.id = f.coverslip_id JOIN conditions cd ON cd.id = cs.condition_id AND cd.study_id = ?
       WHERE c.deleted_at IS NULL AND c.role = 'cell' ${scope} ORDER BY c.id`,
    )
    .raw();
  for (const [id, f, e, name] of cellStmt.iterate(studyId, ...scoped) as Iterable<[number, number, number, string]>) {
    cellIds.push(id);
    fieldOf.push(fieldIdx.get(f)!);
    excl.push(e);
    names.push(name);
  }
  const n = cellIds.length;
  const cellId = shared(Int32Array, n);
  cellId.set(cellIds);
  const field = shared(Int32Array, n);
  field.set(fieldOf);
  const excluded = shared(Uint8Array, n);
  excluded.set(excl);
  const rowOf = lookup(cellId);

  // names: rank among distinct names in SQLite's BINARY order (UTF-8 bytes)
  const distinct = [...new Set(names)];
  const enc = new TextEncoder();
  const bytes = new Map(distinct.map((s) => [s, enc.encode(s)]));
  distinct.sort((a, b) => Buffer.compare(bytes.get(a)!, bytes.get(b)!));
  const nameRankOf = new Map(distinct.map((s, i) => [s, i]));
  const nameRank = Int32Array.from(names, (s) => nameRankOf.get(s)!);

  // measurements of the source: for each cell the highest measurement id among the source's runs
  const colNames = [...NUMERIC_COLUMNS, 'provisional'] as const;
  const cols = Object.fromEntries(colNames.map((k) => [k, shared(Float64Array, n).fill(NaN)])) as GridIndex['cols'];
  const measured = shared(Uint8Array, n);
  const calibration = shared(Float64Array, n).fill(NaN);
  if (src.runIds.length) {
    const sel = MEASUREMENT_SELECT;
    const inScope = scoped.length ? `AND m.field_id IN (${scoped.map(() => '?').join(', ')})` : '';
    const stmt = db.prepare(`SELECT m.cell_id, ${sel} FROM measurements m WHERE m.run_id IN (${src.runIds.map(() => '?').join(', ')}) ${inScope} ORDER BY m.id`).raw();
    const arrays = [...colNames.map((k) => cols[k]), calibration];
    for (const row of stmt.iterate(...src.runIds, ...scoped) as Iterable<(number | null)[]>) {
      const r = rowOf(row[0] as number);
      if (r < 0) continue;
      measured[r] = 1;
      for (let j = 0; j < arrays.length; j++) {
        const v = row[j + 1];
        arrays[j][r] = v === null ? NaN : v;
      }
    }
  }
  const saturated = shared(Uint8Array, n);
  const s1 = cols.saturatedFraction1, s2 = cols.saturatedFraction2;
  for (let r = 0; r < n; r++) saturated[r] = s1[r] > 0 || s2[r] > 0 ? 1 : 0;

  return { n, cellId, field, excluded, measured, saturated, cols, calibration, distinctNames: distinct, fieldId, coverslipId, conditionId, fieldRank: { condition, coverslip, field: fieldOrder }, nameRank };
}

/**
 * A typed array of n elements on a SharedArrayBuffer: the per-cell columns are shared, not copied, with the
 * threads that read them (Compare's, compare-worker.ts); only this thread writes them.
 */
function shared<T extends Int32Array | Uint8Array | Float64Array>(C: { new (b: SharedArrayBuffer): T; BYTES_PER_ELEMENT: number }, n: number): T {
  return new C(new SharedArrayBuffer(n * C.BYTES_PER_ELEMENT));
}

/** cell id → row (rows are in id order): a dense table when the ids are close together, else a map */
function lookup(cellId: Int32Array): (id: number) => number {
  const n = cellId.length;
  const minId = n ? cellId[0] : 0;
  const span = n ? cellId[n - 1] - minId + 1 : 0;
  if (span <= 4 * n + 1024) {
    const dense = new Int32Array(span).fill(-1);
    for (let r = 0; r < n; r++) dense[cellId[r] - minId] = r;
    return (id) => (id >= minId && id - minId < span ? dense[id - minId] : -1);
  }
  const m = new Map<number, number>();
  for (let r = 0; r < n; r++) m.set(cellId[r], r);
  return (id) => m.get(id) ?? -1;
}

/** The index over data read by readGridData (here or in a thread: grid-index-worker.ts). */
export function gridIndexOf(data: GridData): GridIndex {
  return { ...data, rowOf: lookup(data.cellId), sorts: new Map(), filtered: new Map() };
}

/** The typed arrays of the data not on shared memory, to hand them between threads without copying. */
export function gridDataBuffers(data: GridData): ArrayBuffer[] {
  const arrays = [data.cellId, data.field, data.excluded, data.measured, data.saturated, data.fieldId, data.coverslipId, data.conditionId, data.nameRank, ...Object.values(data.fieldRank), ...Object.values(data.cols), data.calibration];
  return [...new Set(arrays.map((a) => a.buffer).filter((b): b is ArrayBuffer => b instanceof ArrayBuffer))];
}

/** Reads the index of one study and source on this thread. */
export function buildGridIndex(db: Database.Database, studyId: number, src: ResolvedSource, fieldIds?: number[]): GridIndex {
  return gridIndexOf(readGridData(db, studyId, src, fieldIds));
}

/**
 * Adds measurements written since the index was read (ids above `afterId`, of the source's runs), as a run
 * does field by field: their cells' columns are overwritten (a higher id is the later measurement) and the
 * orders are dropped. Returns false, changing nothing, when one of them is of a cell the index does not hold
 * (then it must be read again).
 */
export function appendMeasurements(db: Database.Database, ix: GridIndex, src: ResolvedSource, afterId: number, fieldIds?: number[]): boolean {
  if (!src.runIds.length) return true;
  const scoped = fieldIds?.length ? fieldIds : [];
  const inScope = scoped.length ? `AND m.field_id IN (${scoped.map(() => '?').join(', ')})` : '';
  const sel = MEASUREMENT_SELECT;
  const rows = db
    .prepare(`SELECT m.cell_id, ${sel} FROM measurements m WHERE m.id > ? AND m.run_id IN (${src.runIds.map(() => '?').join(', ')}) ${inScope} ORDER BY m.id`)
    .raw()
    .all(afterId, ...src.runIds, ...scoped) as (number | null)[][];
  const at = rows.map((row) => ix.rowOf(row[0] as number));
  if (at.some((r) => r < 0)) return false;
  const arrays = [...[...NUMERIC_COLUMNS, 'provisional' as const].map((k) => ix.cols[k]), ix.calibration];
  rows.forEach((row, i) => {
    const r = at[i];
    ix.measured[r] = 1;
    for (let j = 0; j < arrays.length; j++) arrays[j][r] = row[j + 1] === null ? NaN : (row[j + 1] as number);
    ix.saturated[r] = ix.cols.saturatedFraction1[r] > 0 || ix.cols.saturatedFraction2[r] > 0 ? 1 : 0;
  });
  if (rows.length) {
    ix.sorts.clear();
    ix.filtered.clear();
  }
  return true;
}

// ---- sorting ------------------------------------------------------------------------------------------------

const f64 = new Float64Array(1);
const u32 = new Uint32Array(f64.buffer);
/** IEEE-754 bits mapped so that unsigned order is numeric order (−0 taken as 0, as SQLite compares them equal). */
function orderedBits(v: number): [number, number] {
  f64[0] = v === 0 ? 0 : v;
  const lo = u32[LOW_WORD], hi = u32[1 - LOW_WORD];
  return hi & 0x80000000 ? [~hi >>> 0, ~lo >>> 0] : [(hi | 0x80000000) >>> 0, lo];
}

/** Index of the low 32-bit word of a 64-bit element in a Uint32Array view of its buffer. */
const LOW_WORD = new Uint8Array(new Uint32Array([1]).buffer)[0] === 1 ? 0 : 1;

/**
 * Row indices ordered by the unsigned 64-bit keys (hi, lo), ties by row ascending (a stable sort of the rows).
 * Each row becomes one 64-bit integer: the key's top 64 − b bits, then the row in the low b bits (b bits hold
 * every row number), sorted by the engine's native BigUint64Array sort (about a quarter of the time of a
 * 4-pass radix sort in script at a million rows). Rows whose keys differ only in the b dropped bits end up
 * next to each other in row order; those few runs are put in full-key order afterwards, so the result is
 * exactly the order of the full keys.
 */
export function sortByKeys(hi: Uint32Array, lo: Uint32Array): Int32Array {
  const n = hi.length;
  const perm = new Int32Array(n);
  if (n === 0) return perm;
  const rowBits = Math.max(1, Math.ceil(Math.log2(n)));
  if (rowBits > 31) throw new RangeError(`too many rows to sort: ${n}`);
  const rowMask = 2 ** rowBits - 1;
  const keyMask = (~rowMask) >>> 0;
  const packed = new BigUint64Array(n);
  const w = new Uint32Array(packed.buffer);
  const L = LOW_WORD, H = 1 - LOW_WORD;
  for (let r = 0; r < n; r++) {
    w[2 * r + H] = hi[r];
    w[2 * r + L] = ((lo[r] & keyMask) | r) >>> 0;
  }
  packed.sort();
  for (let i = 0; i < n; i++) perm[i] = w[2 * i + L] & rowMask;
  // runs of equal truncated keys: already in row order; reorder those whose full keys differ
  let start = 0;
  for (let i = 1; i <= n; i++) {
    if (i < n && w[2 * i + H] === w[2 * start + H] && ((w[2 * i + L] ^ w[2 * start + L]) & keyMask) === 0) continue;
    if (i - start > 1) {
      const first = lo[perm[start]];
      let mixed = false;
      for (let j = start + 1; j < i && !mixed; j++) mixed = lo[perm[j]] !== first;
      if (mixed) {
        const run = Array.from(perm.subarray(start, i)).sort((a, b) => lo[a] - lo[b] || a - b);
        perm.set(run, start);
      }
    }
    start = i;
  }
  return perm;
}

/** Key of a numeric sort value; NULL (NaN) is all ones, which no value's key reaches, so NULLs come last. */
function valueKey(v: number, dir: 'asc' | 'desc'): [number, number] {
  if (Number.isNaN(v)) return [0xffffffff, 0xffffffff];
  const [h, l] = orderedBits(v);
  return dir === 'desc' ? [~h >>> 0, ~l >>> 0] : [h, l];
}

/** The rank of row r in a text-keyed or flag sort (ascending). */
function rankOf(ix: GridIndex, sort: SortKey): (r: number) => number {
  switch (sort) {
    case 'condition':
      return (r) => ix.fieldRank.condition[ix.field[r]];
    case 'coverslip':
      return (r) => ix.fieldRank.coverslip[ix.field[r]];
    case 'field':
      return (r) => ix.fieldRank.field[ix.field[r]];
    case 'cell':
      return (r) => ix.nameRank[r];
    case 'excluded':
      return (r) => ix.excluded[r];
    case 'saturated':
      return (r) => ix.saturated[r];
    default:
      throw new Error(`not a ranked sort: ${sort}`);
  }
}

/** The sort's key of row r as (hi, lo), ascending in the requested direction, NULLs after every value. */
function keyFn(ix: GridIndex, sort: SortKey, dir: 'asc' | 'desc'): (r: number) => [number, number] {
  const flip = (k: number) => (dir === 'desc' ? ~k >>> 0 : k);
  const rankKey = (rank: (r: number) => number): ((r: number) => [number, number]) => (r) => [flip(rank(r)), 0];
  switch (sort) {
    case 'condition':
      return rankKey((r) => ix.fieldRank.condition[ix.field[r]]);
    case 'coverslip':
      return rankKey((r) => ix.fieldRank.coverslip[ix.field[r]]);
    case 'field':
      return rankKey((r) => ix.fieldRank.field[ix.field[r]]);
    case 'cell':
      return rankKey((r) => ix.nameRank[r]);
    case 'excluded':
      return rankKey((r) => ix.excluded[r]);
    case 'saturated':
      return rankKey((r) => ix.saturated[r]);
    default: {
      const col = ix.cols[sort as NumericColumn | 'provisional'];
      return (r) => valueKey(col[r], dir);
    }
  }
}

/** The rows in the order of (sort, dir), cached per index (at most 48 orders, 4 bytes per row each). */
export function sorted(ix: GridIndex, sort: SortKey, dir: 'asc' | 'desc'): Int32Array {
  const k = `${sort}:${dir}`;
  let perm = ix.sorts.get(k);
  if (perm) {
    ix.sorts.delete(k);
    ix.sorts.set(k, perm);
    return perm;
  }
  const n = ix.n;
  const hi = new Uint32Array(n), lo = new Uint32Array(n);
  if (isNumericSort(sort)) {
    // the same keys as valueKey, computed in bulk on the column's bits (no tuple per row)
    // the column's IEEE-754 words (−0 read as 0, as SQLite compares them equal)
    const col = ix.cols[sort];
    const copy = new Float64Array(n);
    for (let r = 0; r < n; r++) copy[r] = col[r] === 0 ? 0 : col[r];
    const bits = new Uint32Array(copy.buffer);
    const desc = dir === 'desc';
    const L = LOW_WORD, H = 1 - LOW_WORD;
    for (let r = 0; r < n; r++) {
      const l = bits[2 * r + L], h = bits[2 * r + H];
      if ((h & 0x7ff00000) === 0x7ff00000 && ((h & 0xfffff) | l) !== 0) {
        hi[r] = 0xffffffff; // NaN: NULL, after every value
        lo[r] = 0xffffffff;
        continue;
      }
      const neg = (h & 0x80000000) !== 0;
      const kh = neg ? ~h >>> 0 : (h | 0x80000000) >>> 0;
      const kl = neg ? ~l >>> 0 : l;
      hi[r] = desc ? ~kh >>> 0 : kh;
      lo[r] = desc ? ~kl >>> 0 : kl;
    }
  } else {
    // a rank per row (lo stays 0), flipped for descending
    const rank = rankOf(ix, sort);
    const flip = dir === 'desc' ? 0xffffffff : 0;
    for (let r = 0; r < n; r++) hi[r] = (rank(r) ^ flip) >>> 0;
  }
  perm = sortByKeys(hi, lo);
  ix.sorts.set(k, perm);
  while (ix.sorts.size > 48) ix.sorts.delete(ix.sorts.keys().next().value!);
  return perm;
}

// ---- filters ------------------------------------------------------------------------------------------------

function predicate(ix: GridIndex, f: GridFilters): (r: number) => boolean {
  const tests: ((r: number) => boolean)[] = [];
  const byField = (ids: number[] | undefined, of: Int32Array) => {
    if (!ids || ids.length === 0) return;
    const want = new Set(ids);
    const ok = Uint8Array.from(of, (id) => (want.has(id) ? 1 : 0));
    tests.push((r) => ok[ix.field[r]] === 1);
  };
  byField(f.conditionId, ix.conditionId);
  byField(f.coverslipId, ix.coverslipId);
  byField(f.fieldId, ix.fieldId);
  const tri = (v: 'any' | 'yes' | 'no', yes: (r: number) => boolean) => {
    if (v === 'yes') tests.push(yes);
    if (v === 'no') tests.push((r) => !yes(r));
  };
  tri(f.excluded, (r) => ix.excluded[r] === 1);
  tri(f.saturated, (r) => ix.saturated[r] === 1);
  tri(f.provisional, (r) => ix.cols.provisional[r] === 1);
  tri(f.measured, (r) => ix.measured[r] === 1);
  for (const range of f.range) {
    const col = ix.cols[range.column];
    if (!col) throw badRequest(`range: unknown column ${JSON.stringify(range.column)}`);
    // NaN (NULL) fails both comparisons, as NULL does in SQL
    if (range.min !== null) {
      const min = range.min;
      tests.push((r) => col[r] >= min);
    }
    if (range.max !== null) {
      const max = range.max;
      tests.push((r) => col[r] <= max);
    }
  }
  if (f.q) {
    // decided once per distinct name (a study has far fewer distinct names than cells)
    const needle = asciiLower(f.q);
    const match = Uint8Array.from(ix.distinctNames, (name) => (asciiLower(name).includes(needle) ? 1 : 0));
    tests.push((r) => match[ix.nameRank[r]] === 1);
  }
  if (tests.length === 0) return ALL;
  return (r) => {
    for (const t of tests) if (!t(r)) return false;
    return true;
  };
}
/** the predicate of no filter: the filtered order is then the sort order itself (no copy) */
const ALL = () => true;

/** The filtered rows in sort order (cached per sort, direction and filters). */
export function filteredRows(ix: GridIndex, f: GridFilters, sort: SortKey, dir: 'asc' | 'desc'): Int32Array {
  const { conditionId, coverslipId, fieldId, excluded, saturated, provisional, measured, range, q } = f;
  const k = JSON.stringify([sort, dir, conditionId, coverslipId, fieldId, excluded, saturated, provisional, measured, range, q]);
  let rows = ix.filtered.get(k);
  if (rows) {
    ix.filtered.delete(k);
    ix.filtered.set(k, rows);
    return rows;
  }
  const perm = sorted(ix, sort, dir);
  const test = predicate(ix, f);
  if (test === ALL) rows = perm;
  else {
    const out = new Int32Array(ix.n);
    let m = 0;
    for (let i = 0; i < ix.n; i++) {
      const r = perm[i];
      if (test(r)) out[m++] = r;
    }
    rows = out.slice(0, m);
  }
  ix.filtered.set(k, rows);
  while (ix.filtered.size > 96) ix.filtered.delete(ix.filtered.keys().next().value!);
  return rows;
}

// ---- cursors ------------------------------------------------------------------------------------------------

/**
 * A cursor names the last row of a page: the sort, direction, that row's sort value (numeric sorts) and its
 * cell id. The next page starts after that position, also when rows were added or removed since.
 */
export interface Cursor {
  s: SortKey;
  d: 'asc' | 'desc';
  /** the row's value of a numeric sort column (null for NULL); absent for the other sorts */
  v?: number | null;
  c: number;
}

export function encodeCursor(ix: GridIndex, sort: SortKey, dir: 'asc' | 'desc', row: number): string {
  const c: Cursor = { s: sort, d: dir, c: ix.cellId[row] };
  if (isNumericSort(sort)) {
    const v = ix.cols[sort][row];
    c.v = Number.isNaN(v) ? null : v;
  }
  return Buffer.from(JSON.stringify(c)).toString('base64url');
}

const isNumericSort = (s: SortKey): s is NumericColumn | 'provisional' => s === 'provisional' || (NUMERIC_COLUMNS as readonly string[]).includes(s);

export function decodeCursor(text: string, sort: SortKey, dir: 'asc' | 'desc'): Cursor {
  let c: Cursor;
  try {
    c = JSON.parse(Buffer.from(text, 'base64url').toString('utf8')) as Cursor;
  } catch {
    throw badRequest(`cursor: not a cursor of this table, received ${JSON.stringify(text.slice(0, 80))}`);
  }
  if (!c || typeof c !== 'object' || !Number.isInteger(c.c) || (c.v !== undefined && c.v !== null && typeof c.v !== 'number')) {
    throw badRequest(`cursor: not a cursor of this table, received ${JSON.stringify(text.slice(0, 80))}`);
  }
  if (c.s !== sort || c.d !== dir) throw badRequest(`cursor: made for sort ${JSON.stringify(c.s)} ${c.d}, but this request sorts by ${JSON.stringify(sort)} ${dir}`);
  if (isNumericSort(sort) && c.v === undefined) throw badRequest(`cursor: carries no value of ${JSON.stringify(sort)}, received ${JSON.stringify(text.slice(0, 80))}`);
  return c;
}

/** Index into `rows` (filtered, sorted) of the first row after the cursor: a binary search by (key, cell id). */
export function positionAfter(ix: GridIndex, rows: Int32Array, cursor: Cursor): number {
  const key = keyFn(ix, cursor.s, cursor.d);
  let ch: number, cl: number;
  const row = ix.rowOf(cursor.c);
  if (isNumericSort(cursor.s)) [ch, cl] = valueKey(cursor.v === null || cursor.v === undefined ? NaN : cursor.v, cursor.d);
  else if (row >= 0) [ch, cl] = key(row);
  else throw badRequest(`cursor: cell ${cursor.c} it continues after is no longer in this table; start again from the first page`);
  const atOrBefore = (r: number) => {
    const [h, l] = key(r);
    return h < ch || (h === ch && (l < cl || (l === cl && ix.cellId[r] <= cursor.c)));
  };
  let lo = 0, hi = rows.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (atOrBefore(rows[mid])) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}
