/**
 * Cells (regions of interest) of a field:
 *   GET    /api/fields/:id/cells            list (read)
 *   POST   /api/fields/:id/cells            create a drawn outline or a background region (edit_images)
 *   PATCH  /api/cells/:id                   rename, change role, move vertices → new geometry (edit_images)
 *   DELETE /api/cells/:id                   delete; soft delete when measurements refer to the cell
 *   POST   /api/fields/:id/cells/import     label TIFF (multipart field "file"): one cell per positive label; a
 *                                           stack with the field's slice count gives 3-D cells ('label3d')
 *   POST   /api/fields/:id/cells/auto       automatic outlines (shared/analysis/segment.ts)
 *   GET    /api/fields/:id/cells.geojson    outlines as GeoJSON in pixel coordinates (server/cells/geojson.ts)
 *   POST   /api/fields/:id/cells/geojson    import GeoJSON outlines (multipart field "file"), all or nothing
 *   GET    /api/fields/:id/cells/labels.tiff  the cells as a label-image TIFF (server/cells/label-tiff.ts); a label stack,
 *                                           one page per slice, when a stack has 3-D cells or outlines with a z range
 * pixelCount is always computed here with the shared rasterizer (shared/schemas/cells.ts cellIndices).
 * Every change writes an audit event in the same transaction.
 */
import { Router } from 'express';
import multer from 'multer';
import { and, asc, eq, isNull, sql } from 'drizzle-orm';
import type { AppContext } from '../context.js';
import type { DbOrTx } from '../db/client.js';
import { auditEvents, cells, conditions, coverslips, fields, measurements } from '../db/schema.js';
import { notFoundAsked, requireStudy, type Asked, type StudyAction } from '../auth/policy.js';
import type { SessionUser } from '../auth/session.js';
import { badRequest, parse, unauthorized, HttpError } from '../http/errors.js';
import { idParam } from '../http/params.js';
import {
  AutoOutlineRequest,
  CreateCellRequest,
  UpdateCellRequest,
  cellIndices,
  checkZRange,
  extentOf,
  originOfRow,
  type Cell,
  type CellGeometry,
  type CellOrigin,
  type FoundWith,
} from '../../shared/schemas/cells.js';
import { gaussianFilter } from '../../shared/analysis/gaussian.js';
import type { ChannelArray } from '../../shared/analysis/types.js';
import { labelRegions } from '../../shared/analysis/labels.js';
import { encodeRuns } from '../../shared/analysis/rle.js';
import { concatSlices } from '../images/projection.js';
import { autoLevel, segmentCells } from '../../shared/analysis/segment.js';
import { outlinesToGeoJson, readOutlines } from '../cells/geojson.js';
import { labelTiffOf } from '../cells/label-tiff.js';
import { fileSafe } from '../compare/csv.js';

type CellRow = typeof cells.$inferSelect;
type FieldRow = typeof fields.$inferSelect;

/** Most cells one import or automatic run may create (a guard against a wrong file, not a science limit). */
export const MAX_CELLS_PER_REQUEST = 5000;


/** How a row was made (shared/schemas/cells.ts `originOf`). */
export const originOf = (r: Pick<CellRow, 'origin' | 'source'>): CellOrigin => originOfRow(r.origin, r.source);

/** The origin of a cell whose outline was changed by hand: drawn stays drawn, imported or found becomes edited. */
const editedOrigin = (o: CellOrigin): CellOrigin => (o.how === 'imported' || o.how === 'found' ? { ...o, edited: true } : o);

/** A stored cell as the API gives it; `sizeZ` is its field's slice count (for the z range and voxel count). */
export function toCell(r: CellRow, sizeZ: number): Cell {
  return {
    id: r.id,
    fieldId: r.fieldId,
    name: r.name,
    role: r.role,
    geometry: r.geometry as Cell['geometry'],
    source: r.source,
    origin: originOf(r),
    pixelCount: r.pixelCount,
    ...extentOf(r.geometry as Cell['geometry'], r.pixelCount, sizeZ),
    excluded: r.excluded,
    exclusionReason: r.exclusionReason,
    createdAt: r.createdAt,
  };
}

/** The field and its study id, after the permission check (404 when not visible, 403 when not allowed). */
export function loadFieldFor(ctx: AppContext, user: SessionUser | undefined, fieldId: number, action: StudyAction, asked: Asked = { what: 'field', id: fieldId }): { field: FieldRow; studyId: number } {
  if (!user) throw unauthorized();
  const row = ctx.db
    .select({ field: fields, studyId: conditions.studyId })
    .from(fields)
    .innerJoin(coverslips, eq(coverslips.id, fields.coverslipId))
    .innerJoin(conditions, eq(conditions.id, coverslips.conditionId))
    .where(eq(fields.id, fieldId))
    .get();
  if (!row || row.field.status === 'deleted') throw notFoundAsked(asked);
  requireStudy(ctx.db, user, row.studyId, action, asked);
  return row;
}

function loadCellFor(ctx: AppContext, user: SessionUser | undefined, cellId: number, action: StudyAction) {
  if (!user) throw unauthorized();
  const asked = { what: 'cell', id: cellId };
  const cell = ctx.db.select().from(cells).where(eq(cells.id, cellId)).get();
  if (!cell || cell.deletedAt) throw notFoundAsked(asked);
  const { field, studyId } = loadFieldFor(ctx, user, cell.fieldId, action, asked);
  return { cell, field, studyId };
}

/** Pixel count under the one rasterization rule; an outline covering no pixel centre, or a z range beyond the field's slices, is refused. */
function pixelCountOf(g: CellGeometry, field: FieldRow): number {
  let n: number;
  try {
    checkZRange(g, field.sizeZ);
    n = cellIndices(g, field.width, field.height).length;
  } catch (e) {
    throw badRequest(`geometry: ${(e as Error).message}`);
  }
  if (n === 0) throw badRequest(`the outline covers no pixel centre of the ${field.width} × ${field.height} field; draw it over the image`);
  return n;
}

const hasMeasurements = (db: DbOrTx, cellId: number) => !!db.select({ id: measurements.id }).from(measurements).where(eq(measurements.cellId, cellId)).limit(1).get();

function nextName(ctx: AppContext, fieldId: number, role: 'cell' | 'background', prefix?: string) {
  const n = ctx.db.select({ n: sql<number>`count(*)` }).from(cells).where(and(eq(cells.fieldId, fieldId), eq(cells.role, role))).get()?.n ?? 0;
  return `${prefix ?? (role === 'background' ? 'Background' : 'Cell')} ${n + 1}`;
}

/** Deletes a cell: soft (deletedAt) when measurements refer to it, otherwise removes the row. */
function removeCell(tx: DbOrTx, cell: CellRow): boolean {
  if (hasMeasurements(tx, cell.id)) {
    tx.update(cells).set({ deletedAt: new Date().toISOString() }).where(eq(cells.id, cell.id)).run();
    return true;
  }
  tx.delete(cells).where(eq(cells.id, cell.id)).run();
  return false;
}

/**
 * The 3-D label cell of one label value from its ascending voxel indices (z·plane + pixel) in a stack: the
 * slices it spans (1-based) and one run-length code per slice of that span.
 */
export function label3dOf(label: number, voxels: Uint32Array, plane: number): Extract<CellGeometry, { kind: 'label3d' }> {
  const z0 = Math.floor(voxels[0] / plane), z1 = Math.floor(voxels[voxels.length - 1] / plane);
  const slices: number[][] = [];
  let k = 0;
  for (let z = z0; z <= z1; z++) {
    const start = k;
    while (k < voxels.length && voxels[k] < (z + 1) * plane) k++;
    const inPlane = voxels.subarray(start, k).map((v) => v - z * plane);
    slices.push(encodeRuns(inPlane, plane));
  }
  return { kind: 'label3d', label, z: [z0 + 1, z1 + 1], slices };
}

const upload = multer({ storage: multer.memoryStorage(), limits: { fileSize: 512 * 1024 * 1024, files: 1 } });
/** GeoJSON outlines: text, far smaller than images (5000 outlines of a few hundred vertices fit easily). */
const geojsonUpload = multer({ storage: multer.memoryStorage(), limits: { fileSize: 64 * 1024 * 1024, files: 1 } });

export default function cellsRoutes(ctx: AppContext) {
  const r = Router();

  r.get('/fields/:id/cells', (req, res) => {
    const fieldId = idParam(req, 'id');
    const { field } = loadFieldFor(ctx, req.user, fieldId, 'read');
    const rows = ctx.db.select().from(cells).where(and(eq(cells.fieldId, fieldId), isNull(cells.deletedAt))).orderBy(asc(cells.id)).all();
    res.json({ cells: rows.map((c) => toCell(c, field.sizeZ)) });
  });

  r.post('/fields/:id/cells', (req, res) => {
    const fieldId = idParam(req, 'id');
    const { field, studyId } = loadFieldFor(ctx, req.user, fieldId, 'edit_images');
    const body = parse(CreateCellRequest, req.body);
    const pixelCount = pixelCountOf(body.geometry, field);
    const row = ctx.db.transaction((tx) => {
      const c = tx
        .insert(cells)
        .values({ fieldId, name: body.name ?? nextName(ctx, fieldId, body.role), role: body.role, geometry: body.geometry, source: 'drawn', origin: { how: 'drawn' }, pixelCount, createdBy: req.user!.id })
        .returning()
        .get();
      tx.insert(auditEvents).values({ actorId: req.user!.id, action: 'cell.create', entity: 'cell', entityId: c.id, studyId, details: { fieldId, role: c.role, kind: body.geometry.kind, pixelCount } }).run();
      return c;
    });
    res.status(201).json({ cell: toCell(row, field.sizeZ) });
  });

  r.patch('/cells/:id', (req, res) => {
    const cellId = idParam(req, 'id');
    const { cell, field, studyId } = loadCellFor(ctx, req.user, cellId, 'edit_images');
    const body = parse(UpdateCellRequest, req.body);
    const patch: Partial<CellRow> = {};
    if (body.name !== undefined) patch.name = body.name;
    if (body.role !== undefined) patch.role = body.role;
    if (body.geometry) {
      patch.geometry = body.geometry;
      patch.pixelCount = pixelCountOf(body.geometry, field);
      patch.origin = editedOrigin(originOf(cell));
    }
    const row = ctx.db.transaction((tx) => {
      let out: CellRow;
      // a new geometry for a measured cell keeps the measured one intact: the old row is soft-deleted and the
      // new outline becomes a new cell (measurements always describe the outline they were made on)
      if (body.geometry && hasMeasurements(tx, cell.id)) {
        tx.update(cells).set({ deletedAt: new Date().toISOString() }).where(eq(cells.id, cell.id)).run();
        const { id: _old, createdAt: _c, deletedAt: _d, ...rest } = cell;
        out = tx.insert(cells).values({ ...rest, ...patch, source: 'drawn', createdBy: req.user!.id }).returning().get();
        tx.insert(auditEvents).values({ actorId: req.user!.id, action: 'cell.replace', entity: 'cell', entityId: out.id, studyId, details: { replaces: cell.id, fieldId: cell.fieldId } }).run();
      } else {
        out = tx.update(cells).set(patch).where(eq(cells.id, cell.id)).returning().get();
        tx.insert(auditEvents)
          .values({ actorId: req.user!.id, action: 'cell.update', entity: 'cell', entityId: cell.id, studyId, details: { fieldId: cell.fieldId, changed: Object.keys(patch) } })
          .run();
      }
      return out;
    });
    res.json({ cell: toCell(row, field.sizeZ) });
  });

  r.delete('/cells/:id', (req, res) => {
    const cellId = idParam(req, 'id');
    const { cell, studyId } = loadCellFor(ctx, req.user, cellId, 'edit_images');
    const soft = ctx.db.transaction((tx) => {
      const s = removeCell(tx, cell);
      tx.insert(auditEvents).values({ actorId: req.user!.id, action: 'cell.delete', entity: 'cell', entityId: cell.id, studyId, details: { fieldId: cell.fieldId, soft: s, name: cell.name } }).run();
      return s;
    });
    res.json({ ok: true, soft });
  });

  // permission is checked before the body is read, so nobody can make the server buffer a file it would refuse
  const canImport: import('express').RequestHandler = (req, _res, next) => {
    loadFieldFor(ctx, req.user, idParam(req, 'id'), 'edit_images');
    next();
  };
  r.post('/fields/:id/cells/import', canImport, upload.single('file'), async (req, res) => {
    const fieldId = idParam(req, 'id');
    const { field, studyId } = loadFieldFor(ctx, req.user, fieldId, 'edit_images');
    if (!req.file) throw badRequest('attach the label image as the form field "file"');
    const { ImageInputError } = await import('../images/decode.js');
    const { decodePoolOf } = await import('../images/decode-pool.js');
    // decoded in the decoding thread (heap and time limits), like uploads
    // the pages of a plain multi-page file are z slices of the one label channel
    const { info, slices } = await decodePoolOf(ctx).decodeChannel(req.file.buffer, 1, req.file.originalname, 'slices');
    if (info.width !== field.width || info.height !== field.height)
      throw new ImageInputError(`the label image is ${info.width} × ${info.height} pixels but the field is ${field.width} × ${field.height}; they must match`, 422);
    if (info.channelCount > 1) throw new ImageInputError(`the label image has ${info.channelCount} channels; give a single-channel label image`, 422);
    if (info.sampleFormat === 'float' || slices.some((s) => s instanceof Float32Array || s instanceof Float64Array))
      throw new ImageInputError('the label image holds floating-point pixels; labels must be whole numbers (8, 16 or 32-bit unsigned)', 422);
    if (slices.length !== 1 && slices.length !== field.sizeZ)
      throw new ImageInputError(`the label image has ${slices.length} slices but the field has ${field.sizeZ}; give one 2-D label image or a label stack with one plane per slice of the field`, 422);
    const stack = slices.length > 1;
    const plane = field.width * field.height;
    let regions;
    try {
      regions = labelRegions(stack ? concatSlices(slices as ChannelArray[], 0, slices.length - 1) : slices[0]);
    } catch (e) {
      throw new ImageInputError(`not a label image: ${(e as Error).message}`, 422);
    }
    if (regions.length === 0) throw new ImageInputError('the label image has no positive labels (0 is background); nothing to import', 422);
    if (regions.length > MAX_CELLS_PER_REQUEST) throw new ImageInputError(`the label image has ${regions.length} labels; at most ${MAX_CELLS_PER_REQUEST} can be imported at once`, 422);
    const replace = req.query.replace === '1' || req.query.replace === 'true';
    const created = ctx.db.transaction((tx) => {
      if (replace) {
        const old = tx.select().from(cells).where(and(eq(cells.fieldId, fieldId), eq(cells.source, 'label_image'), isNull(cells.deletedAt))).all();
        for (const c of old) removeCell(tx, c);
      }
      const out: CellRow[] = [];
      for (const reg of regions) {
        const geometry = stack ? label3dOf(reg.label, reg.indices, plane) : { kind: 'label' as const, label: reg.label, rle: encodeRuns(reg.indices, plane) };
        const pixelCount = stack ? cellIndices(geometry, field.width, field.height).length : reg.indices.length;
        out.push(
          tx
            .insert(cells)
            .values({ fieldId, name: `Label ${reg.label}`, role: 'cell', geometry, source: 'label_image', origin: { how: 'imported', file: req.file!.originalname, label: reg.label, edited: false }, pixelCount, createdBy: req.user!.id })
            .returning()
            .get(),
        );
      }
      tx.insert(auditEvents)
        .values({ actorId: req.user!.id, action: 'cell.import_labels', entity: 'field', entityId: fieldId, studyId, details: { labels: regions.length, file: req.file!.originalname, replace } })
        .run();
      return out;
    });
    res.status(201).json({ cells: created.map((c) => toCell(c, field.sizeZ)), labels: regions.length });
  });

  const liveCells = (fieldId: number, sizeZ: number) => ctx.db.select().from(cells).where(and(eq(cells.fieldId, fieldId), isNull(cells.deletedAt))).orderBy(asc(cells.id)).all().map((c) => toCell(c, sizeZ));

  r.get('/fields/:id/cells.geojson', (req, res) => {
    const fieldId = idParam(req, 'id');
    const { field } = loadFieldFor(ctx, req.user, fieldId, 'read');
    res.setHeader('content-type', 'application/geo+json; charset=utf-8');
    res.setHeader('content-disposition', `attachment; filename="${fileSafe(field.name)}-outlines.geojson"`);
    res.send(JSON.stringify(outlinesToGeoJson(field, liveCells(fieldId, field.sizeZ))));
  });

  r.get('/fields/:id/cells/labels.tiff', (req, res) => {
    const fieldId = idParam(req, 'id');
    const { field } = loadFieldFor(ctx, req.user, fieldId, 'read');
    const tiff = labelTiffOf(liveCells(fieldId, field.sizeZ), field.width, field.height, field.sizeZ);
    res.setHeader('content-type', 'image/tiff');
    res.setHeader('content-disposition', `attachment; filename="${fileSafe(field.name)}-labels.tif"`);
    res.end(tiff);
  });

  r.post('/fields/:id/cells/geojson', canImport, geojsonUpload.single('file'), (req, res) => {
    const fieldId = idParam(req, 'id');
    const { field, studyId } = loadFieldFor(ctx, req.user, fieldId, 'edit_images');
    if (!req.file) throw badRequest('attach the GeoJSON file as the form field "file"');
    let doc: unknown;
    try {
      doc = JSON.parse(req.file.buffer.toString('utf8'));
    } catch (e) {
      throw badRequest(`the file is not valid JSON: ${(e as Error).message}`);
    }
    const outlines = readOutlines(doc, field.width, field.height, field.sizeZ);
    const replace = req.query.replace === '1' || req.query.replace === 'true';
    const created = ctx.db.transaction((tx) => {
      if (replace) for (const c of tx.select().from(cells).where(and(eq(cells.fieldId, fieldId), eq(cells.source, 'geojson'), isNull(cells.deletedAt))).all()) removeCell(tx, c);
      const rows = outlines.map((o) =>
        tx.insert(cells).values({ fieldId, name: o.name, role: o.role, geometry: o.geometry, source: 'geojson', origin: { how: 'imported', file: req.file!.originalname, label: null, edited: false }, pixelCount: o.pixelCount, createdBy: req.user!.id }).returning().get(),
      );
      tx.insert(auditEvents)
        .values({ actorId: req.user!.id, action: 'cell.import_geojson', entity: 'field', entityId: fieldId, studyId, details: { features: outlines.length, file: req.file!.originalname, replace } })
        .run();
      return rows;
    });
    res.status(201).json({ cells: created.map((c) => toCell(c, field.sizeZ)), features: outlines.length });
  });

  r.post('/fields/:id/cells/auto', async (req, res) => {
    const fieldId = idParam(req, 'id');
    const { field, studyId } = loadFieldFor(ctx, req.user, fieldId, 'edit_images');
    const body = parse(AutoOutlineRequest, req.body ?? {});
    if (body.maxPixels != null && body.maxPixels < body.minPixels) throw badRequest(`maxPixels (${body.maxPixels}) must be at least minPixels (${body.minPixels})`);
    const { loadFieldPixels } = await import('../images/intake.js');
    const px = await loadFieldPixels(ctx, fieldId, { z: body.z });
    const n = px.width * px.height;
    let values: ArrayLike<number>;
    if (body.channel === 'ch1') values = px.ch1;
    else if (body.channel === 'ch2') values = px.ch2;
    else {
      const integer = px.sampleFormat !== 'float' && px.bitDepth <= 16;
      const s = integer ? new Uint32Array(n) : new Float64Array(n);
      for (let i = 0; i < n; i++) s[i] = px.ch1[i] + px.ch2[i];
      values = s;
    }
    if (body.smoothing > 0) {
      try {
        values = gaussianFilter(values as ChannelArray, px.width, px.height, body.smoothing, { x0: 0, y0: 0, x1: px.width, y1: px.height });
      } catch (e) {
        throw new HttpError(422, `smoothing needs a value in every pixel: ${(e as Error).message}; set smoothing to 0`);
      }
    }
    const level = body.threshold.method === 'manual' ? body.threshold.level : autoLevel(values);
    if (level === null) throw new HttpError(422, `the ${body.channel === 'sum' ? 'summed channels are' : body.channel + ' is'} constant over the field; no Otsu level exists — give a manual level`);
    const seg = segmentCells(values, px.width, px.height, {
      level,
      fillHoles: body.fillHoles,
      split: body.split,
      seedDistance: body.seedDistance,
      minPixels: body.minPixels,
      maxPixels: body.maxPixels,
    });
    const counts = { level, found: seg.found, droppedSmall: seg.droppedSmall, droppedLarge: seg.droppedLarge };
    const outlines = seg.objects.map((o) => ({ points: o.points, pixels: o.pixelCount }));
    if (body.preview) {
      // nothing is stored: the person looks at the outlines first, then keeps them with the same settings
      if (seg.objects.length > MAX_CELLS_PER_REQUEST) throw new HttpError(422, `${seg.objects.length} objects found; at most ${MAX_CELLS_PER_REQUEST} at once — raise the threshold or the minimum size`);
      res.json({ cells: [], outlines, kept: false, ...counts });
      return;
    }
    if (seg.objects.length > MAX_CELLS_PER_REQUEST)
      throw new HttpError(422, `${seg.objects.length} objects found; at most ${MAX_CELLS_PER_REQUEST} at once — raise the threshold or the minimum size`);
    const settings: FoundWith = {
      channel: body.channel,
      method: body.threshold.method,
      level,
      smoothing: body.smoothing,
      z: px.sizeZ > 1 ? (body.z ?? 0) : null,
      fillHoles: body.fillHoles,
      split: body.split,
      seedDistance: body.seedDistance,
      minPixels: body.minPixels,
      maxPixels: body.maxPixels,
      pixelSizeUm: field.pixelSizeUm ?? null,
    };
    const created = ctx.db.transaction((tx) => {
      if (body.replace) {
        const old = tx.select().from(cells).where(and(eq(cells.fieldId, fieldId), eq(cells.source, 'automatic'), isNull(cells.deletedAt))).all();
        for (const c of old) removeCell(tx, c);
      }
      const start = tx.select({ n: sql<number>`count(*)` }).from(cells).where(and(eq(cells.fieldId, fieldId), eq(cells.source, 'automatic'))).get()?.n ?? 0;
      const out: CellRow[] = [];
      seg.objects.forEach((o, k) => {
        const geometry: CellGeometry = { kind: 'polygon', points: o.points };
        out.push(
          tx
            .insert(cells)
            .values({ fieldId, name: `Auto ${start + k + 1}`, role: 'cell', geometry, source: 'automatic', origin: { how: 'found', settings, edited: false }, pixelCount: pixelCountOf(geometry, field), createdBy: req.user!.id })
            .returning()
            .get(),
        );
      });
      tx.insert(auditEvents)
        .values({
          actorId: req.user!.id,
          action: 'cell.auto_outline',
          entity: 'field',
          entityId: fieldId,
          studyId,
          details: { params: body, level, found: seg.found, kept: seg.objects.length, droppedSmall: seg.droppedSmall, droppedLarge: seg.droppedLarge },
        })
        .run();
      return out;
    });
    res.status(201).json({ cells: created.map((c) => toCell(c, field.sizeZ)), outlines, kept: true, ...counts });
  });

  return r;
}
