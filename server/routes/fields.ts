/**
 * Fields (two-channel images) of coverslips:
 *   POST   /api/coverslips/:id/fields        multipart upload: parts "files" (TIFF files) + "plan" (JSON, see
 *                                             shared/schemas/fields.ts UploadPlan); per-field results (edit_images)
 *   GET    /api/coverslips/:id/fields        fields of a coverslip (read)
 *   GET    /api/studies/:studyId/fields      fields of a study (read)
 *   GET    /api/fields/:id                   FieldDetail (read)
 *   DELETE /api/fields/:id                   delete; soft delete while measurements refer to it (edit_images)
 *   PUT    /api/fields/:id/pixel-size    µm per pixel by hand (edit_images, audited)
 *   PUT    /api/fields/:id/z-step        µm between slices of a stack by hand (edit_images, audited)
 *   GET    /api/fields/:id/preview.png       composite / single-channel preview (read)
 *   GET    /api/fields/:id/pixels?z=         raw pixels of one slice (or the projection) for the browser's pixel
 *          scatter (read), or ?section=xz|yz&at= an orthogonal section through every slice (the XZ / YZ views), in the one pixel format of shared/pixels/codec.ts (header + both channels in the
 *          field's own sample type); header x-syntopy-z names the slice in words.
 *   GET    /api/fields/:id/shift?maxShift=    the field's channel shift and van Steensel curves (read; nothing stored)
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { Router, type Request } from 'express';
import multer, { type StorageEngine } from 'multer';
import { and, asc, eq, inArray, or } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import { auditEvents, cells, conditions, coverslips, fields, files, instruments, measurements, runFields, studies } from '../db/schema.js';
import { notFoundAsked, requireStudy, studyPermissions, type StudyAction } from '../auth/policy.js';
import type { SessionUser } from '../auth/session.js';
import { badRequest, HttpError, parse, unauthorized } from '../http/errors.js';
import { idParam } from '../http/params.js';
import { FieldDetail, FieldSummary, PixelsQuery, PreviewQuery, SATURATION_FLAG_FRACTION, SetFieldInstrumentRequest, SetFieldPixelSizeRequest, SetFieldZStepRequest, UploadPlan, type UploadResult } from '../../shared/schemas/fields.js';
import { encodePixels, PIXELS_CONTENT_TYPE, sampleTypeOf } from '../../shared/pixels/codec.js';
import { ingestField, inFlightShas, loadFieldPixels, loadFieldStack, type FieldRow } from '../images/intake.js';
import { orthoSection } from '../images/projection.js';
import { renderPreview } from '../images/preview.js';
import { keyForSha } from '../images/store.js';
import { decodePoolOf } from '../images/decode-pool.js';
import { storedFieldBytes } from '../images/calibration-bytes.js';
import { FieldShiftQuery, type FieldShift } from '../../shared/schemas/instruments.js';



export function toFieldSummary(f: FieldRow): FieldSummary {
  const flag = (c: FieldRow['facts']['ch1']) => c.saturatedFraction > SATURATION_FLAG_FRACTION || (c.plateauFraction ?? 0) > SATURATION_FLAG_FRACTION;
  return {
    id: f.id,
    coverslipId: f.coverslipId,
    name: f.name,
    width: f.width,
    height: f.height,
    sizeZ: f.sizeZ,
    bitDepth: f.bitDepth,
    sampleFormat: f.sampleFormat,
    channelNames: f.channelNames,
    pixelSizeUm: f.pixelSizeUm ?? null,
    instrumentId: f.instrumentId ?? null,
    zStepUm: f.zStepUm ?? null,
    facts: f.facts,
    saturated: flag(f.facts.ch1) || flag(f.facts.ch2),
    status: f.status,
    fileSize: f.fileSize,
    createdAt: f.createdAt,
  };
}

/** coverslip → condition → study, or 404 */
function coverslipStudy(ctx: AppContext, coverslipId: number) {
  const row = ctx.db
    .select({ coverslipId: coverslips.id, conditionId: conditions.id, studyId: conditions.studyId })
    .from(coverslips)
    .innerJoin(conditions, eq(conditions.id, coverslips.conditionId))
    .where(eq(coverslips.id, coverslipId))
    .get();
  if (!row) throw notFoundAsked({ what: 'coverslip', id: coverslipId });
  return row;
}

/** Loads a field and checks the action in its study (404 naming the field when the user may not see it). */
export function loadFieldFor(ctx: AppContext, user: SessionUser | undefined, fieldId: number, action: StudyAction) {
  if (!user) throw unauthorized();
  const asked = { what: 'field', id: fieldId };
  const field = ctx.db.select().from(fields).where(eq(fields.id, fieldId)).get();
  if (!field) throw notFoundAsked(asked);
  const cs = coverslipStudy(ctx, field.coverslipId);
  requireStudy(ctx.db, user, cs.studyId, action, asked);
  return { field, studyId: cs.studyId, conditionId: cs.conditionId };
}

// ---------------------------------------------------------------- upload storage: temp file + SHA-256 while streaming

interface HashedFile {
  path: string;
  size: number;
  sha256: string;
}

function tempDir(ctx: AppContext) {
  return path.join(ctx.env.DATA_DIR, 'tmp', 'uploads');
}

function hashingStorage(ctx: AppContext): StorageEngine {
  return {
    _handleFile(req, file, cb) {
      const dir = tempDir(ctx);
      fs.mkdirSync(dir, { recursive: true });
      const p = path.join(dir, `up-${crypto.randomUUID()}`);
      ((req as Request & { tempFiles?: string[] }).tempFiles ??= []).push(p);
      const hash = crypto.createHash('sha256');
      const out = fs.createWriteStream(p);
      let size = 0;
      let failed = false;
      const fail = (e: Error) => {
        if (failed) return;
        failed = true;
        out.destroy();
        fs.rm(p, { force: true }, () => cb(e));
      };
      file.stream.on('data', (chunk: Buffer) => {
        size += chunk.length;
        hash.update(chunk);
      });
      file.stream.on('error', fail);
      out.on('error', fail);
      out.on('finish', () => {
        if (!failed) cb(null, { path: p, size, sha256: hash.digest('hex') } as Partial<Express.Multer.File>);
      });
      file.stream.pipe(out);
    },
    _removeFile(_req, file, cb) {
      fs.rm(file.path, { force: true }, () => cb(null));
    },
  };
}

async function removeTemps(req: Request) {
  for (const p of (req as Request & { tempFiles?: string[] }).tempFiles ?? []) await fsp.rm(p, { force: true }).catch(() => {});
}

// ---------------------------------------------------------------- delete

function deleteField(ctx: AppContext, f: FieldRow, userId: number, studyId: number): { soft: boolean; orphans: string[] } {
  return ctx.db.transaction((tx) => {
    const measured = tx.select({ id: measurements.id }).from(measurements).where(eq(measurements.fieldId, f.id)).limit(1).get();
    const inRun = tx.select({ r: runFields.runId }).from(runFields).where(eq(runFields.fieldId, f.id)).limit(1).get();
    const soft = !!measured || !!inRun;
    let orphans: string[] = [];
    if (soft) {
      tx.update(fields).set({ status: 'deleted', deletedAt: new Date().toISOString() }).where(eq(fields.id, f.id)).run();
    } else {
      tx.delete(cells).where(eq(cells.fieldId, f.id)).run();
      tx.delete(fields).where(eq(fields.id, f.id)).run();
      for (const sha of new Set([f.file1Sha, f.file2Sha])) {
        const still = tx
          .select({ id: fields.id })
          .from(fields)
          .where(or(eq(fields.file1Sha, sha), eq(fields.file2Sha, sha)))
          .limit(1)
          .get();
        if (!still && !inFlightShas.has(sha)) {
          tx.delete(files).where(eq(files.sha256, sha)).run();
          orphans.push(sha);
        }
      }
    }
    tx.insert(auditEvents).values({ actorId: userId, action: soft ? 'field.soft_delete' : 'field.delete', entity: 'field', entityId: f.id, studyId, details: { name: f.name, coverslipId: f.coverslipId } }).run();
    return { soft, orphans };
  });
}

// ---------------------------------------------------------------- routes

/** Upload temp files left by a crash (older than a day) are removed at start-up. */
function sweepStaleTemps(ctx: AppContext) {
  const dir = tempDir(ctx);
  const cutoff = Date.now() - 24 * 3600 * 1000;
  for (const name of fs.existsSync(dir) ? fs.readdirSync(dir) : []) {
    const p = path.join(dir, name);
    try {
      if (name.startsWith('up-') && fs.statSync(p).mtimeMs < cutoff) fs.rmSync(p, { force: true });
    } catch {
      /* gone meanwhile */
    }
  }
}

export default function fieldsRoutes(ctx: AppContext) {
  const r = Router();
  sweepStaleTemps(ctx);
  const upload = multer({
    storage: hashingStorage(ctx),
    // browsers send UTF-8 file names without a charset parameter ("Zelle µ1.tif")
    defParamCharset: 'utf8',
    limits: { fileSize: ctx.env.MAX_UPLOAD_BYTES, files: ctx.env.MAX_FILES_PER_REQUEST, fields: 20, fieldSize: 1024 * 1024 },
  });

  r.post(
    '/coverslips/:id/fields',
    (req, _res, next) => {
      // permission first: nothing is streamed to disk for a coverslip the user may not change
      const coverslipId = idParam(req, 'id');
      const cs = coverslipStudy(ctx, coverslipId);
      requireStudy(ctx.db, req.user, cs.studyId, 'edit_images', { what: 'coverslip', id: coverslipId });
      if (!String(req.headers['content-type'] ?? '').startsWith('multipart/form-data')) {
        throw badRequest('send the files as multipart/form-data (parts "files" and "plan")');
      }
      next();
    },
    (req, res, next) => {
      upload.array('files', ctx.env.MAX_FILES_PER_REQUEST)(req, res, (err: unknown) => {
        if (err) {
          void removeTemps(req).then(() => {
            const e = err as { name?: string; code?: string; message?: string };
            if (e?.name === 'MulterError' && e.code === 'LIMIT_FILE_SIZE') {
              return next(new HttpError(413, `a file is larger than the ${ctx.env.MAX_UPLOAD_BYTES}-byte upload limit`));
            }
            if (e?.name === 'MulterError' && e.code === 'LIMIT_FILE_COUNT') {
              return next(new HttpError(413, `too many files in one upload; at most ${ctx.env.MAX_FILES_PER_REQUEST}`));
            }
            next(err);
          });
          return;
        }
        next();
      });
    },
    async (req, res) => {
      try {
        const coverslipId = idParam(req, 'id');
        const up = (req.files ?? []) as (Express.Multer.File & HashedFile)[];
        if (up.length === 0) throw badRequest('no files were uploaded; attach TIFF files as the form part "files"');
        let planRaw: unknown;
        if (typeof req.body?.plan === 'string' && req.body.plan.trim()) {
          try {
            planRaw = JSON.parse(req.body.plan);
          } catch {
            throw badRequest(`the "plan" part is not valid JSON: ${JSON.stringify(String(req.body.plan).slice(0, 80))}`);
          }
        } else {
          planRaw = up.map((_, i) => ({ ch1: { file: i, channel: 1 }, ch2: { file: i, channel: 2 } }));
        }
        const plan = parse(UploadPlan, planRaw);
        for (const [i, p] of plan.entries()) {
          for (const ref of [p.ch1, p.ch2]) {
            if (ref.file >= up.length) throw badRequest(`field ${i + 1} of the plan refers to file ${ref.file}, but only ${up.length} file(s) were uploaded`);
          }
          if (p.instrumentId != null && !ctx.db.select({ id: instruments.id }).from(instruments).where(eq(instruments.id, p.instrumentId)).get())
            throw badRequest(`field ${i + 1} of the plan names instrument ${p.instrumentId}, which does not exist`);
        }
        // a plan entry that does not name an instrument (absent, not null) is recorded on the study's default
        const studyDefault = ctx.db.select({ id: studies.defaultInstrumentId }).from(studies).innerJoin(conditions, eq(conditions.studyId, studies.id)).innerJoin(coverslips, eq(coverslips.conditionId, conditions.id)).where(eq(coverslips.id, coverslipId)).get()?.id ?? null;
        const uses = new Map<number, number>();
        for (const p of plan) for (const i of new Set([p.ch1.file, p.ch2.file])) uses.set(i, (uses.get(i) ?? 0) + 1);
        const results: UploadResult[] = [];
        for (const [i, p] of plan.entries()) {
          const f1 = up[p.ch1.file];
          const f2 = up[p.ch2.file];
          const name = p.name || (p.ch1.file === p.ch2.file ? path.parse(f1.originalname).name : `${path.parse(f1.originalname).name} + ${path.parse(f2.originalname).name}`);
          try {
            const field = await ingestField(
              ctx,
              {
                coverslipId,
                userId: req.user!.id,
                name,
                instrumentId: p.instrumentId === undefined ? studyDefault : p.instrumentId,
                pixelSizeUm: p.pixelSizeUm ?? null,
                zStepUm: p.zStepUm ?? null,
                sources: [
                  { path: f1.path, originalName: f1.originalname, channel: p.ch1.channel, sha256: f1.sha256 },
                  { path: f2.path, originalName: f2.originalname, channel: p.ch2.channel, sha256: f2.sha256 },
                ],
              },
              // a file used by one field only is moved into the store; shared ones are copied
              { moveSources: [p.ch1.file, p.ch2.file].every((k) => uses.get(k) === 1) },
            );
            results.push({ index: i, name, ok: true, field: toFieldSummary(field) });
          } catch (e) {
            const err = e as { name?: string; status?: number; message?: string };
            if (err?.name === 'ImageInputError' || e instanceof HttpError) {
              results.push({ index: i, name, ok: false, status: err.status ?? 422, error: err.message ?? 'the file was refused' });
            } else {
              console.error('[syntopy] field intake failed', e);
              results.push({ index: i, name, ok: false, status: 500, error: 'the file could not be stored because of a server error; it was logged' });
            }
          } finally {
            for (const k of new Set([p.ch1.file, p.ch2.file])) uses.set(k, (uses.get(k) ?? 1) - 1);
          }
        }
        await removeTemps(req);
        const failed = results.filter((x) => !x.ok) as Extract<UploadResult, { ok: false }>[];
        if (failed.length === results.length) {
          const status = failed[0].status;
          res.status(status).json({ error: failed.length === 1 ? failed[0].error : `no field was stored: ${failed[0].error}`, results });
        } else res.status(failed.length ? 207 : 201).json({ results });
      } finally {
        await removeTemps(req);
      }
    },
  );

  r.get('/coverslips/:id/fields', (req, res) => {
    const coverslipId = idParam(req, 'id');
    const cs = coverslipStudy(ctx, coverslipId);
    requireStudy(ctx.db, req.user, cs.studyId, 'read', { what: 'coverslip', id: coverslipId });
    const rows = ctx.db
      .select()
      .from(fields)
      .where(and(eq(fields.coverslipId, coverslipId), eq(fields.status, 'ready')))
      .orderBy(asc(fields.id))
      .all();
    res.json({ fields: rows.map(toFieldSummary) });
  });

  r.get('/studies/:studyId/fields', (req, res) => {
    const studyId = idParam(req, 'studyId');
    requireStudy(ctx.db, req.user, studyId, 'read');
    const rows = ctx.db
      .select({ f: fields, conditionId: conditions.id })
      .from(fields)
      .innerJoin(coverslips, eq(coverslips.id, fields.coverslipId))
      .innerJoin(conditions, eq(conditions.id, coverslips.conditionId))
      .where(and(eq(conditions.studyId, studyId), eq(fields.status, 'ready')))
      .orderBy(asc(conditions.position), asc(coverslips.position), asc(fields.id))
      .all();
    res.json({ fields: rows.map((r) => ({ ...toFieldSummary(r.f), conditionId: r.conditionId })) });
  });

  r.get('/fields/:id', (req, res) => {
    const fieldId = idParam(req, 'id');
    const { field, studyId, conditionId } = loadFieldFor(ctx, req.user, fieldId, 'read');
    const study = requireStudy(ctx.db, req.user, studyId, 'read');
    const perms = studyPermissions(ctx.db, req.user!, study);
    const fileRows = ctx.db.select().from(files).where(inArray(files.sha256, [field.file1Sha, field.file2Sha])).all();
    const fileOf = (sha: string, channel: number) => {
      const fr = fileRows.find((x) => x.sha256 === sha);
      return { sha256: sha, originalName: fr?.originalName ?? '', size: fr?.size ?? 0, channel };
    };
    const detail: FieldDetail = {
      ...toFieldSummary(field),
      studyId,
      conditionId,
      files: [fileOf(field.file1Sha, field.channel1), fileOf(field.file2Sha, field.channel2)],
      uploadedBy: field.uploadedBy ?? null,
      instrumentName: field.instrumentId === null ? null : (ctx.db.select({ name: instruments.name }).from(instruments).where(eq(instruments.id, field.instrumentId)).get()?.name ?? null),
      canEdit: perms.has('edit_images'),
    };
    res.json(detail);
  });

  /** Which instrument the field was recorded on (recipes that apply the approved calibration use it); audited. */
  r.put('/fields/:id/instrument', (req, res) => {
    const fieldId = idParam(req, 'id');
    const { field, studyId } = loadFieldFor(ctx, req.user, fieldId, 'edit_images');
    if (field.status === 'deleted') throw notFoundAsked({ what: 'field', id: fieldId });
    const { instrumentId } = parse(SetFieldInstrumentRequest, req.body);
    if (instrumentId !== null && !ctx.db.select({ id: instruments.id }).from(instruments).where(eq(instruments.id, instrumentId)).get())
      throw notFoundAsked({ what: 'instrument', id: instrumentId });
    const next = ctx.db.transaction((tx) => {
      const row = tx.update(fields).set({ instrumentId }).where(eq(fields.id, fieldId)).returning().get();
      tx.insert(auditEvents).values({ actorId: req.user!.id, action: 'field.instrument', entity: 'field', entityId: fieldId, studyId, details: { from: field.instrumentId, to: instrumentId } }).run();
      return row;
    });
    res.json(toFieldSummary(next));
  });

  /** µm per pixel for a field whose files carry none (or a correction); µm settings and scale bars use it; audited. */
  r.put('/fields/:id/pixel-size', (req, res) => {
    const fieldId = idParam(req, 'id');
    const { field, studyId } = loadFieldFor(ctx, req.user, fieldId, 'edit_images');
    if (field.status === 'deleted') throw notFoundAsked({ what: 'field', id: fieldId });
    const { pixelSizeUm } = parse(SetFieldPixelSizeRequest, req.body);
    const next = ctx.db.transaction((tx) => {
      const row = tx.update(fields).set({ pixelSizeUm }).where(eq(fields.id, fieldId)).returning().get();
      tx.insert(auditEvents).values({ actorId: req.user!.id, action: 'field.pixel_size', entity: 'field', entityId: fieldId, studyId, details: { from: field.pixelSizeUm, to: pixelSizeUm } }).run();
      return row;
    });
    res.json(toFieldSummary(next));
  });

  /** µm between the slices of a stack whose files state none (or a correction); 3D block depths and the methods paragraph use it; audited. */
  r.put('/fields/:id/z-step', (req, res) => {
    const fieldId = idParam(req, 'id');
    const { field, studyId } = loadFieldFor(ctx, req.user, fieldId, 'edit_images');
    if (field.status === 'deleted') throw notFoundAsked({ what: 'field', id: fieldId });
    const { zStepUm } = parse(SetFieldZStepRequest, req.body);
    if (zStepUm !== null && field.sizeZ <= 1) throw new HttpError(409, `field "${field.name}" is a single plane, so it has no z step to set (got ${zStepUm} µm)`);
    const next = ctx.db.transaction((tx) => {
      const row = tx.update(fields).set({ zStepUm }).where(eq(fields.id, fieldId)).returning().get();
      tx.insert(auditEvents).values({ actorId: req.user!.id, action: 'field.z_step', entity: 'field', entityId: fieldId, studyId, details: { from: field.zStepUm, to: zStepUm } }).run();
      return row;
    });
    res.json(toFieldSummary(next));
  });

  r.delete('/fields/:id', async (req, res) => {
    const fieldId = idParam(req, 'id');
    const { field, studyId } = loadFieldFor(ctx, req.user, fieldId, 'edit_images');
    if (field.status === 'deleted') throw notFoundAsked({ what: 'field', id: fieldId });
    const { soft, orphans } = deleteField(ctx, field, req.user!.id, studyId);
    for (const sha of orphans) await ctx.store.delete(keyForSha(sha)).catch(() => {});
    res.json({ ok: true, soft });
  });

  r.get('/fields/:id/preview.png', async (req, res) => {
    const fieldId = idParam(req, 'id');
    const { field } = loadFieldFor(ctx, req.user, fieldId, 'read');
    const q = parse(PreviewQuery, req.query);
    if (q.z !== undefined && q.z !== 'mip' && q.z >= field.sizeZ) throw badRequest(`z=${q.z} is not a slice of this field (0–${field.sizeZ - 1})`);
    const p = await renderPreview(ctx, field, q);
    res.setHeader('content-type', 'image/png');
    res.setHeader('cache-control', 'private, max-age=3600');
    res.setHeader('x-syntopy-range', p.ranges.map((r) => `${r.lo},${r.hi}`).join(';'));
    res.setHeader('x-syntopy-preview-size', `${p.width},${p.height}`);
    res.end(p.png);
  });

  r.get('/fields/:id/pixels', async (req, res) => {
    const fieldId = idParam(req, 'id');
    const { field } = loadFieldFor(ctx, req.user, fieldId, 'read');
    const q = parse(PixelsQuery, req.query);
    if (q.section) {
      // an orthogonal section: one row (xz) or column (yz) of every slice, a few hundred kB even for large stacks
      const at = q.at!;
      const limit = q.section === 'xz' ? field.height : field.width;
      if (at >= limit) throw badRequest(`at=${at} is outside the field: the ${q.section === 'xz' ? 'rows' : 'columns'} run 0–${limit - 1}`);
      const stack = await loadFieldStack(ctx, field);
      const ch1 = orthoSection(stack.ch1, stack.width, stack.height, q.section, at);
      const ch2 = orthoSection(stack.ch2, stack.width, stack.height, q.section, at);
      const [w, h] = [q.section === 'xz' ? stack.width : stack.height, stack.sizeZ];
      const body = encodePixels({ width: w, height: h, depth: 1, bitDepth: stack.bitDepth, sampleType: sampleTypeOf(ch1), ch1, ch2 });
      res.setHeader('content-type', PIXELS_CONTENT_TYPE);
      res.setHeader('x-syntopy-z', q.section === 'xz' ? `section through row y = ${at}, x across, slices 1 to ${stack.sizeZ} top to bottom` : `section through column x = ${at}, y across, slices 1 to ${stack.sizeZ} top to bottom`);
      res.setHeader('access-control-expose-headers', 'x-syntopy-z');
      res.end(body);
      return;
    }
    const px = await loadFieldPixels(ctx, field.id, { z: q.z });
    const body = encodePixels({ width: px.width, height: px.height, depth: px.depth, bitDepth: px.bitDepth, sampleType: sampleTypeOf(px.ch1), ch1: px.ch1, ch2: px.ch2 });
    res.setHeader('content-type', PIXELS_CONTENT_TYPE);
    res.setHeader('x-syntopy-z', px.zLabel);
    res.setHeader('access-control-expose-headers', 'x-syntopy-z');
    res.end(body);
  });

  /** The field's own channel shift and cross-correlation curves, measured in a decoding thread; stores nothing. */
  r.get('/fields/:id/shift', async (req, res) => {
    const fieldId = idParam(req, 'id');
    const { field } = loadFieldFor(ctx, req.user, fieldId, 'read');
    if (field.status === 'deleted') throw notFoundAsked({ what: 'field', id: fieldId });
    const { maxShift } = parse(FieldShiftQuery, req.query);
    const m = await decodePoolOf(ctx).measureShift(await storedFieldBytes(ctx, field), maxShift);
    res.json({ fieldId, fieldName: field.name, width: m.width, height: m.height, dx: m.dx, dy: m.dy, peak: m.peak, z: m.z, curves: m.curves } satisfies FieldShift);
  });

  return r;
}
