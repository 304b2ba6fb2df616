/**
 * Checking a sample sheet (shared/schemas/sample-sheet.ts) against a study: every row's columns, then the
 * study's conditions and coverslips, the instruments, the user's right to create what is missing, and which
 * files are already stored (by SHA-256). Reads only; nothing is stored.
 */
import { and, eq, inArray, sql } from 'drizzle-orm';
import type { Db } from '../db/client.js';
import { auditEvents, conditions, coverslips, fields, files, instruments } from '../db/schema.js';
import { parseCsvRecords } from '../../shared/format/csv.js';
import { SAMPLE_SHEET_COLUMNS, SAMPLE_SHEET_REQUIRED, type SampleSheetApplyResponse, type SampleSheetCheckRequest, type SampleSheetCheckResponse, type SampleSheetUpload, type SampleSheetProblem, type SampleSheetRow } from '../../shared/schemas/sample-sheet.js';
import { ZStepUm } from '../../shared/schemas/fields.js';
import { HttpError, badRequest } from '../http/errors.js';

export function checkSampleSheet(
  db: Db,
  studyId: number,
  may: { createConditions: boolean; createCoverslips: boolean },
  req: SampleSheetCheckRequest,
): SampleSheetCheckResponse {
  const [head, ...records] = parseCsvRecords(req.csv);
  if (!head) throw badRequest('the sample sheet is empty');
  const cols = head.cells.map((h) => h.trim().toLowerCase());
  const unknown = cols.filter((c) => !(SAMPLE_SHEET_COLUMNS as readonly string[]).includes(c));
  if (unknown.length) throw badRequest(`the sample sheet has unknown column(s) ${unknown.map((c) => JSON.stringify(c)).join(', ')}; the columns are ${SAMPLE_SHEET_COLUMNS.join(', ')}`);
  const missing = SAMPLE_SHEET_REQUIRED.filter((c) => !cols.includes(c));
  if (missing.length) throw badRequest(`the sample sheet has no ${missing.map((c) => JSON.stringify(c)).join(', ')} column (columns: ${cols.join(', ')})`);
  if (!records.length) throw badRequest('the sample sheet has a header but no rows');

  const conds = db.select().from(conditions).where(eq(conditions.studyId, studyId)).all();
  const condByName = new Map(conds.map((c) => [c.name.toLowerCase(), c])); // names are unique regardless of case
  const slips = conds.length ? db.select().from(coverslips).where(inArray(coverslips.conditionId, conds.map((c) => c.id))).all() : [];
  const slipByName = new Map(slips.map((s) => [`${s.conditionId}\u0000${s.name.toLowerCase()}`, s]));
  const instByName = new Map(db.select({ id: instruments.id, name: instruments.name }).from(instruments).all().map((i) => [i.name, i.id]));

  const problems: SampleSheetProblem[] = [];
  const rows: SampleSheetRow[] = [];
  const newConditions = new Set<string>();
  const newCoverslips = new Set<string>();
  const names = new Map<string, number>();
  for (const rec of records) {
    const { line } = rec;
    const said: string[] = [];
    if (rec.cells.length > cols.length) said.push(`it has ${rec.cells.length} cells, the header ${cols.length}`);
    const get = (c: string) => (cols.indexOf(c) >= 0 ? (rec.cells[cols.indexOf(c)] ?? '').trim() : '');
    for (const c of SAMPLE_SHEET_REQUIRED) if (!get(c)) said.push(`the ${c} is empty`);
    const file = get('file');
    const file2 = get('file2') || null;
    const channel = (c: string, d: number) => {
      const v = get(c);
      if (v === '') return d;
      if (!/^[1-9][0-9]{0,3}$/.test(v)) {
        said.push(`${c} must be a channel number from 1, got ${JSON.stringify(v)}`);
        return d;
      }
      return Number(v);
    };
    const ch1 = channel('ch1', 1);
    const ch2 = channel('ch2', file2 ? 1 : 2);
    if (!file2 && ch1 === ch2 && file) said.push(`ch1 and ch2 are both channel ${ch1} of ${JSON.stringify(file)}`);
    let pixelSizeUm: number | null = null;
    const px = get('pixel_size_um');
    if (px !== '') {
      const v = Number(px);
      if (!Number.isFinite(v) || v <= 0 || v > 1000) said.push(`pixel_size_um must be a number of µm above 0 (at most 1000), got ${JSON.stringify(px)}`);
      else pixelSizeUm = v;
    }
    let zStepUm: number | null = null;
    const zs = get('z_step_um');
    if (zs !== '') {
      const v = Number(zs);
      if (!ZStepUm.safeParse(v).success) said.push(`z_step_um must be a number of µm between slices above 0 (at most 1000), got ${JSON.stringify(zs)}`);
      else zStepUm = v;
    }
    const instrument = get('instrument') || null;
    const instrumentId = instrument ? (instByName.get(instrument) ?? null) : null;
    if (instrument && instrumentId === null) said.push(`no instrument is named ${JSON.stringify(instrument)}`);
    const condition = get('condition');
    const coverslip = get('coverslip');
    const cond = condByName.get(condition.toLowerCase());
    const slip = cond ? slipByName.get(`${cond.id}\u0000${coverslip.toLowerCase()}`) : undefined;
    if (condition && !cond) {
      if (may.createConditions) newConditions.add(condition);
      else said.push(`the study has no condition ${JSON.stringify(condition)}, and you may not add conditions`);
    }
    if (condition && coverslip && !slip) {
      if (may.createCoverslips) newCoverslips.add(`${condition} / ${coverslip}`);
      else said.push(`condition ${JSON.stringify(condition)} has no coverslip ${JSON.stringify(coverslip)}, and you may not add coverslips`);
    }
    const name = get('name') || null;
    const fieldKey = `${condition}\u0000${coverslip}\u0000${name ?? `${file}\u0000${file2 ?? ''}`}`;
    const first = names.get(fieldKey);
    if (first !== undefined) said.push(`it names the same field as line ${first}`);
    else names.set(fieldKey, line);
    if (said.length) problems.push({ line, message: said.join('; ') });
    rows.push({ line, file, file2, ch1, ch2, condition, coverslip, name, pixelSizeUm, zStepUm, instrument, instrumentId, conditionId: cond?.id ?? null, coverslipId: slip?.id ?? null });
  }

  // files already stored: the sheet's file names whose SHA-256 (as the browser computed it) is in the store
  const sheetFiles = new Set(rows.flatMap((r) => [r.file, ...(r.file2 ? [r.file2] : [])]));
  const sent = req.files.filter((f) => sheetFiles.has(f.name));
  const stored = new Set<string>();
  for (let i = 0; i < sent.length; i += 500) {
    const part = sent.slice(i, i + 500);
    for (const r of db.select({ sha256: files.sha256 }).from(files).where(inArray(files.sha256, part.map((f) => f.sha256))).all()) stored.add(r.sha256);
  }
  const alreadyStored = [...new Set(sent.filter((f) => stored.has(f.sha256)).map((f) => f.name))].sort();
  // rows whose field is already on its coverslip: the same files (by the SHA-256 sent) and channels
  const shaOf = new Map(req.files.map((f) => [f.name, f.sha256]));
  const slipIds = [...new Set(rows.map((r) => r.coverslipId).filter((x): x is number => x !== null))];
  const have = new Set<string>();
  if (slipIds.length && shaOf.size)
    for (const f of db.select({ cs: fields.coverslipId, a: fields.file1Sha, b: fields.file2Sha, c1: fields.channel1, c2: fields.channel2 }).from(fields).where(and(inArray(fields.coverslipId, slipIds), eq(fields.status, 'ready'))).all())
      have.add(`${f.cs}:${f.a}:${f.c1}:${f.b}:${f.c2}`);
  const uploaded = rows
    .filter((r) => {
      const a = shaOf.get(r.file), b = r.file2 ? shaOf.get(r.file2) : a;
      return r.coverslipId !== null && a && b && have.has(`${r.coverslipId}:${a}:${r.ch1}:${b}:${r.ch2}`);
    })
    .map((r) => r.line);
  return { ok: problems.length === 0, rows, problems, creates: { conditions: [...newConditions], coverslips: [...newCoverslips] }, alreadyStored, uploaded };
}

/**
 * Applies a sheet that checks clean: creates the conditions and coverslips it names (one transaction, audited
 * as the study routes do), then returns the uploads still to send, one per coverslip, as plans for
 * POST /api/coverslips/:id/fields (at most `perUpload` fields each); rows already uploaded are left out.
 * A sheet with any problem is refused with 422 naming the first lines, and nothing is created.
 */
export function applySampleSheet(
  db: Db,
  studyId: number,
  actorId: number,
  may: { createConditions: boolean; createCoverslips: boolean },
  req: SampleSheetCheckRequest,
  perUpload: number,
): SampleSheetApplyResponse {
  const checked = checkSampleSheet(db, studyId, may, req);
  if (!checked.ok) {
    const shown = checked.problems.slice(0, 5).map((p) => `line ${p.line}: ${p.message}`).join('; ');
    throw new HttpError(422, `the sample sheet has ${checked.problems.length} bad row(s), nothing was created: ${shown}${checked.problems.length > 5 ? '; …' : ''}`);
  }
  const rows = checked.rows.map((r) => ({ ...r }));
  db.transaction((tx) => {
    const condIds = new Map<string, number>();
    const slipIds = new Map<string, number>();
    for (const r of rows) {
      const ck = r.condition.toLowerCase();
      if (r.conditionId === null) {
        let id = condIds.get(ck);
        if (id === undefined) {
          const pos = tx.select({ m: sql<number | null>`max(${conditions.position})` }).from(conditions).where(eq(conditions.studyId, studyId)).get()?.m;
          id = tx.insert(conditions).values({ studyId, name: r.condition, position: (pos ?? -1) + 1 }).returning().get().id;
          tx.insert(auditEvents).values({ actorId, action: 'condition_created', entity: 'condition', entityId: id, studyId, details: { name: r.condition, from: 'sample sheet' } }).run();
          condIds.set(ck, id);
        }
        r.conditionId = id;
      }
      const sk = `${r.conditionId}\u0000${r.coverslip.toLowerCase()}`;
      if (r.coverslipId === null) {
        let id = slipIds.get(sk);
        if (id === undefined) {
          const agg = tx.select({ maxRep: sql<number | null>`max(${coverslips.replicate})`, maxPos: sql<number | null>`max(${coverslips.position})` }).from(coverslips).where(eq(coverslips.conditionId, r.conditionId)).get();
          id = tx.insert(coverslips).values({ conditionId: r.conditionId, name: r.coverslip, replicate: (agg?.maxRep ?? 0) + 1, position: (agg?.maxPos ?? -1) + 1 }).returning().get().id;
          tx.insert(auditEvents).values({ actorId, action: 'coverslip_created', entity: 'coverslip', entityId: id, studyId, details: { name: r.coverslip, conditionId: r.conditionId, from: 'sample sheet' } }).run();
          slipIds.set(sk, id);
        }
        r.coverslipId = id;
      }
    }
  });
  const done = new Set(checked.uploaded);
  const bySlip = new Map<number, typeof rows>();
  for (const r of rows) if (!done.has(r.line)) bySlip.set(r.coverslipId!, [...(bySlip.get(r.coverslipId!) ?? []), r]);
  const uploads: SampleSheetUpload[] = [];
  for (const [coverslipId, list] of bySlip) {
    for (let i = 0; i < list.length; i += perUpload) {
      const part = list.slice(i, i + perUpload);
      const names: string[] = [];
      const at = (n: string) => (names.includes(n) ? names.indexOf(n) : names.push(n) - 1);
      const plan = part.map((r) => ({
        ...(r.name ? { name: r.name } : {}),
        ch1: { file: at(r.file), channel: r.ch1 },
        ch2: { file: r.file2 ? at(r.file2) : at(r.file), channel: r.ch2 },
        // an empty instrument cell leaves it to the study's default instrument
        ...(r.instrumentId !== null ? { instrumentId: r.instrumentId } : {}),
        ...(r.pixelSizeUm !== null ? { pixelSizeUm: r.pixelSizeUm } : {}),
        ...(r.zStepUm !== null ? { zStepUm: r.zStepUm } : {}),
      }));
      uploads.push({ coverslipId, files: names, plan, lines: part.map((r) => r.line) });
    }
  }
  return { created: checked.creates, uploads, uploaded: checked.uploaded };
}
