/**
 * Cells (regions of interest) of a field: request and response shapes shared by server/routes/cells.ts and
 * the workspace client (src/features/workspace). Coordinates are image pixels; the pixel (x, y) covers
 * [x, x+1) × [y, y+1) and belongs to an outline when its centre (x+0.5, y+0.5) is inside by the even-odd
 * rule (shared/analysis/rasterize.ts is the one implementation).
 */
import { z } from 'zod';
import { rasterizeInto, maskToIndices, shapeIndices, type Shape } from '../analysis/rasterize';
import { checkRuns, decodeRuns } from '../analysis/rle';
import { extrudeIndices } from '../analysis/volume';

/** Largest vertex count accepted for one outline (freehand strokes are thinned on the client). */
export const MAX_VERTICES = 20000;
/** Longest cell name. */
export const MAX_CELL_NAME = 120;

const coord = z.number().finite().gte(-1e6).lte(1e6);
const Point = z.tuple([coord, coord]);

/**
 * The slices a cell covers in a stack: [from, to], 1-based and inclusive (as `analyze --rois` takes `"z"`).
 * Absent on a drawn outline = every slice. Checked against the field's slice count where the field is known
 * (`checkZRange`).
 */
export const ZRange = z
  .tuple([z.number().int().min(1, 'slices are counted from 1'), z.number().int().min(1, 'slices are counted from 1')])
  .superRefine(([a, b], ctx) => {
    if (a > b) ctx.addIssue({ code: 'custom', message: `a z range runs from a slice to the same or a later one, got [${a}, ${b}]` });
  });
export type ZRange = z.infer<typeof ZRange>;

export const PolygonGeometry = z.object({ kind: z.literal('polygon'), points: z.array(Point).min(3, 'an outline needs at least 3 points').max(MAX_VERTICES), z: ZRange.optional() });
export const FreehandGeometry = z.object({ kind: z.literal('freehand'), points: z.array(Point).min(3, 'an outline needs at least 3 points').max(MAX_VERTICES), z: ZRange.optional() });
export const RectGeometry = z.object({
  kind: z.literal('rect'),
  x: coord,
  y: coord,
  width: z.number().finite().positive('width must be > 0'),
  height: z.number().finite().positive('height must be > 0'),
  z: ZRange.optional(),
});
export const EllipseGeometry = z.object({
  kind: z.literal('ellipse'),
  cx: coord,
  cy: coord,
  rx: z.number().finite().positive('rx must be > 0'),
  ry: z.number().finite().positive('ry must be > 0'),
  z: ZRange.optional(),
});
/**
 * A cell imported from a label image: `rle` is the run-length code of its mask over the field in row-major
 * order, flat pairs [start, length, start, length, …] where start is the linear index y·width + x; runs are
 * sorted, non-overlapping and never empty (shared/analysis/rle.ts encodes, decodes and checks them; the
 * bounds against the field size are checked where the field is known, in `cellIndices`). Exact by
 * construction (no outline tracing).
 */
export const LabelGeometry = z.object({
  kind: z.literal('label'),
  label: z.number().int().positive(),
  rle: z
    .array(z.number().int().nonnegative())
    .max(4_000_000)
    .superRefine((rle, ctx) => {
      try {
        checkRuns(rle);
      } catch (e) {
        ctx.addIssue({ code: 'custom', message: (e as Error).message });
      }
    }),
});

const Runs = z
  .array(z.number().int().nonnegative())
  .max(4_000_000)
  .superRefine((rle, ctx) => {
    try {
      checkRuns(rle);
    } catch (e) {
      ctx.addIssue({ code: 'custom', message: (e as Error).message });
    }
  });

/**
 * A cell imported from a 3-D label stack: one label value across slices. `z` is the slices it spans (1-based,
 * inclusive) and `slices[k]` the run-length code (as in `LabelGeometry`, over one plane) of its pixels on slice
 * z[0] + k, empty where the label skips a slice. Runs measure exactly these voxels (`cellVoxels`).
 */
export const Label3dGeometry = z
  .object({
    kind: z.literal('label3d'),
    label: z.number().int().positive(),
    z: ZRange,
    slices: z.array(Runs).min(1).max(10_000),
  });

export const CellGeometrySchema = z.discriminatedUnion('kind', [PolygonGeometry, FreehandGeometry, RectGeometry, EllipseGeometry, LabelGeometry, Label3dGeometry]).superRefine((g, ctx) => {
  if (g.kind !== 'label3d') return;
  const n = g.z[1] - g.z[0] + 1;
  if (g.slices.length !== n) ctx.addIssue({ code: 'custom', message: `the z range [${g.z[0]}, ${g.z[1]}] covers ${n} slices, but ${g.slices.length === 1 ? 'one slice code was' : `${g.slices.length} slice codes were`} given` });
});
export type CellGeometry = z.infer<typeof CellGeometrySchema>;
/** Geometries a user can draw (label masks only come from an import). */
export const DrawnGeometrySchema = z.discriminatedUnion('kind', [PolygonGeometry, FreehandGeometry, RectGeometry, EllipseGeometry]);
export type DrawnGeometry = z.infer<typeof DrawnGeometrySchema>;

export const CellRole = z.enum(['cell', 'background']);
export type CellRole = z.infer<typeof CellRole>;
export const CellSource = z.enum(['drawn', 'label_image', 'automatic', 'seed', 'geojson']);

/** The settings "Find cells…" used, as the cell records them (sizes in pixels; the field's pixel size beside them). */
export const FoundWith = z.object({
  channel: z.enum(['ch1', 'ch2', 'sum']),
  /** 'otsu' (on values clipped at their 99.5th percentile) or 'manual' */
  method: z.enum(['otsu', 'manual']),
  /** the foreground level used (value > level) */
  level: z.number(),
  /** Gaussian smoothing σ in pixels before the threshold, 0 = none */
  smoothing: z.number().min(0),
  /** z slice (0-based) or 'mip'; null for single-plane fields */
  z: z.union([z.number().int().nonnegative(), z.literal('mip')]).nullable(),
  fillHoles: z.boolean(),
  split: z.boolean(),
  /** watershed seed distance in pixels */
  seedDistance: z.number(),
  minPixels: z.number().int(),
  maxPixels: z.number().int().nullable(),
  /** µm per pixel of the field when the cell was found, null when the file did not say */
  pixelSizeUm: z.number().positive().nullable(),
});
export type FoundWith = z.infer<typeof FoundWith>;

/**
 * How a cell was made (the cells table's `origin` column): drawn with an outline tool, imported from a label
 * image, found by "Find cells…" with its settings, or part of the invented demo data. `edited` marks an
 * imported or found outline whose shape was changed by hand afterwards.
 */
export const CellOrigin = z.discriminatedUnion('how', [
  z.object({ how: z.literal('drawn') }),
  z.object({ how: z.literal('imported'), file: z.string().nullable(), label: z.number().int().nullable(), edited: z.boolean().default(false) }),
  z.object({ how: z.literal('found'), settings: FoundWith.nullable(), edited: z.boolean().default(false) }),
  z.object({ how: z.literal('demo') }),
]);
export type CellOrigin = z.infer<typeof CellOrigin>;

/** A stored cell's origin: its `origin` column, or for rows stored before origins were recorded, what `source` tells. */
export function originOfRow(origin: CellOrigin | null | undefined, source: z.infer<typeof CellSource>): CellOrigin {
  if (origin) return origin;
  switch (source) {
    case 'drawn':
      return { how: 'drawn' };
    case 'label_image':
    case 'geojson':
      return { how: 'imported', file: null, label: null, edited: false };
    case 'automatic':
      return { how: 'found', settings: null, edited: false };
    case 'seed':
      return { how: 'demo' };
  }
}

export const Cell = z.object({
  id: z.number().int(),
  fieldId: z.number().int(),
  name: z.string(),
  role: CellRole,
  geometry: CellGeometrySchema,
  source: CellSource,
  /** how the cell was made (rows stored before this was recorded: from `source`, settings unknown) */
  origin: CellOrigin,
  /** pixels of the cell in one plane (for a 3-D label cell: of its footprint, the union of its slices) */
  pixelCount: z.number().int(),
  /** the slices the cell covers, 1-based and inclusive ([1, 1] on a single-plane field) */
  zRange: z.tuple([z.number().int(), z.number().int()]),
  /** voxels the cell covers when its field is measured in 3D (= pixelCount on a single-plane field) */
  voxelCount: z.number().int(),
  excluded: z.boolean(),
  exclusionReason: z.string().nullable(),
  createdAt: z.string(),
});
export type Cell = z.infer<typeof Cell>;

export const CellList = z.object({ cells: z.array(Cell) });
export type CellList = z.infer<typeof CellList>;

export const CreateCellRequest = z.object({
  name: z.string().trim().min(1, 'give the cell a name').max(MAX_CELL_NAME).optional(),
  role: CellRole.default('cell'),
  geometry: DrawnGeometrySchema,
});
export type CreateCellRequest = z.input<typeof CreateCellRequest>;

export const UpdateCellRequest = z
  .object({
    name: z.string().trim().min(1, 'give the cell a name').max(MAX_CELL_NAME).optional(),
    role: CellRole.optional(),
    geometry: DrawnGeometrySchema.optional(),
  })
  .refine((v) => v.name !== undefined || v.role !== undefined || v.geometry !== undefined, 'nothing to change: send name, role or geometry');
export type UpdateCellRequest = z.infer<typeof UpdateCellRequest>;

export const CellResponse = z.object({ cell: Cell });
export const DeleteCellResponse = z.object({ ok: z.literal(true), soft: z.boolean() });

/** Automatic outlines (shared/analysis/segment.ts). Every parameter is stated so a result can be repeated. */
export const AutoOutlineRequest = z.object({
  /** which intensities to threshold */
  channel: z.enum(['ch1', 'ch2', 'sum']).default('sum'),
  /** 'otsu' (Otsu 1979, on values clipped at their 99.5th percentile: segment.ts autoLevel) or a manual level; foreground is value > level */
  threshold: z.discriminatedUnion('method', [z.object({ method: z.literal('otsu') }), z.object({ method: z.literal('manual'), level: z.number().finite() })]).default({ method: 'otsu' }),
  /** z slice or maximum-intensity projection for stacks */
  z: z.union([z.number().int().nonnegative(), z.literal('mip')]).optional(),
  /** Gaussian smoothing σ in pixels before the threshold (0 = none): cells stand out as bodies, not puncta */
  smoothing: z.number().finite().min(0).max(200).default(0),
  fillHoles: z.boolean().default(true),
  /** split touching cells by a distance-transform watershed */
  split: z.boolean().default(true),
  /** minimum distance (pixels) between two seeds of the watershed: smaller splits more */
  seedDistance: z.number().finite().min(1).max(500).default(10),
  minPixels: z.number().int().min(1).default(30),
  maxPixels: z.number().int().min(1).nullable().default(null),
  /** when true, existing automatic outlines of the field are replaced (deleted or soft-deleted) */
  replace: z.boolean().default(false),
  /** when true, nothing is stored: the answer carries the outlines for a look before keeping them */
  preview: z.boolean().default(false),
});
export type AutoOutlineRequest = z.input<typeof AutoOutlineRequest>;

export const AutoOutlineResponse = z.object({
  /** the stored cells (empty for a preview) */
  cells: z.array(Cell),
  /** the outlines found, stored or not: outer pixel-edge polygon and pixel count */
  outlines: z.array(z.object({ points: z.array(z.tuple([z.number(), z.number()])), pixels: z.number().int() })),
  kept: z.boolean(),
  level: z.number().nullable(),
  found: z.number().int(),
  droppedSmall: z.number().int(),
  droppedLarge: z.number().int(),
});
export type AutoOutlineResponse = z.infer<typeof AutoOutlineResponse>;

export const ImportLabelsResponse = z.object({ cells: z.array(Cell), labels: z.number().int() });
export type ImportLabelsResponse = z.infer<typeof ImportLabelsResponse>;

/**
 * Outlines as GeoJSON (RFC 7946, Butler et al. 2016, doi:10.17487/RFC7946): GET /api/fields/:id/cells.geojson
 * and POST /api/fields/:id/cells/geojson. Coordinates are pixels, not longitude/latitude (stated in the
 * collection's `properties`, a foreign member RFC 7946 §6.1 allows); each feature's properties carry the name,
 * the background flag and how the outline is stored (server/cells/geojson.ts).
 */
export const PIXEL_CONVENTION =
  'pixel coordinates, not longitude/latitude: x to the right, y down, origin at the top-left corner of pixel (0, 0); pixel (i, j) covers [i, i+1) × [j, j+1) and belongs to an outline when its centre (i + 0.5, j + 0.5) is inside by the even-odd rule over the rings of a polygon';
const Position = z.tuple([z.number(), z.number()]);
const Ring = z.array(Position);
export const OutlineGeometry = z.discriminatedUnion('type', [
  z.object({ type: z.literal('Polygon'), coordinates: z.array(Ring) }),
  z.object({ type: z.literal('MultiPolygon'), coordinates: z.array(z.array(Ring)) }),
]);
export const OUTLINE_KINDS = ['polygon', 'freehand', 'rect', 'ellipse', 'label', 'label3d'] as const;
export const OutlineProperties = z.object({
  name: z.string(),
  /** a background region (for background subtraction), not a cell */
  background: z.boolean(),
  /** how the outline is stored: a rect or ellipse comes back exactly from `shape`, the polygon drawn for other tools */
  kind: z.enum(OUTLINE_KINDS),
  shape: z.union([RectGeometry.omit({ kind: true }), EllipseGeometry.omit({ kind: true })]).optional(),
  /** the label number of a cell imported from a label image */
  label: z.number().int().positive().optional(),
  /**
   * the slices the outline covers in a stack, 1-based and inclusive (absent: every slice); a 3-D label cell gives
   * its footprint with the slices it spans (its exact voxels travel in the label-stack TIFF)
   */
  z: ZRange.optional(),
  cellId: z.number().int(),
  excluded: z.boolean(),
});
export const OutlineFeature = z.object({ type: z.literal('Feature'), id: z.number().int(), geometry: OutlineGeometry, properties: OutlineProperties });
export const OutlineCollection = z.object({
  type: z.literal('FeatureCollection'),
  properties: z.object({
    coordinates: z.literal('pixel'),
    convention: z.string(),
    fieldId: z.number().int(),
    field: z.string(),
    width: z.number().int(),
    height: z.number().int(),
  }),
  features: z.array(OutlineFeature),
});
export type OutlineCollection = z.infer<typeof OutlineCollection>;
export type OutlineFeature = z.infer<typeof OutlineFeature>;

export const ImportOutlinesResponse = z.object({ cells: z.array(Cell), features: z.number().int() });
export type ImportOutlinesResponse = z.infer<typeof ImportOutlinesResponse>;

// ---------------------------------------------------------------------------------------------------------
// The one mapping from a stored cell geometry to its pixels, used by the server (pixelCount, runs) and the
// browser (overlay, scatter, live preview). Drawn outlines go through shared/analysis/rasterize.ts (the one
// pixel-centre rule); label cells decode their run-length code.


/** The rasterizer's shape for a drawn geometry (null for label masks). */
export function shapeOfGeometry(g: CellGeometry): Shape | null {
  switch (g.kind) {
    case 'polygon':
    case 'freehand':
      return { kind: 'polygon', points: g.points };
    case 'rect':
      return { kind: 'rectangle', x: g.x, y: g.y, width: g.width, height: g.height };
    case 'ellipse':
      return { kind: 'ellipse', cx: g.cx, cy: g.cy, rx: g.rx, ry: g.ry };
    case 'label':
    case 'label3d':
      return null;
  }
}

/** The run-length codes of a label cell's planes (one for a 2-D label, one per slice for a 3-D one). */
const planeCodes = (g: CellGeometry): number[][] => (g.kind === 'label' ? [g.rle] : g.kind === 'label3d' ? g.slices : []);

/**
 * Mask (1 = in at least one cell) of the union of cells in a width × height field: the same pixels as the union
 * of their `cellIndices`, drawn into one mask (no full-field mask per cell).
 */
export function cellsMask(geometries: readonly CellGeometry[], width: number, height: number): Uint8Array {
  const mask = new Uint8Array(width * height);
  for (const g of geometries) {
    const shape = shapeOfGeometry(g);
    if (shape) rasterizeInto(mask, shape, width, height);
    else for (const rle of planeCodes(g)) for (const i of decodeRuns(rle, width * height)) mask[i] = 1;
  }
  return mask;
}

/**
 * Linear pixel indices (y·width + x, ascending) of a cell in a width × height field: its pixels in one plane
 * (a 3-D label cell: its footprint, the union of its slices).
 */
export function cellIndices(g: CellGeometry, width: number, height: number): Uint32Array {
  const shape = shapeOfGeometry(g);
  if (shape) return shapeIndices(shape, width, height);
  if (g.kind === 'label') return decodeRuns(g.rle, width * height);
  return maskToIndices(cellsMask([g], width, height));
}

/** The slices (1-based, inclusive) a cell covers in a field of `sizeZ` slices: its z range, or every slice. */
export function zRangeOf(g: CellGeometry, sizeZ: number): [number, number] {
  return 'z' in g && g.z ? [g.z[0], g.z[1]] : [1, Math.max(1, sizeZ)];
}

/** Throws a RangeError quoting the range when a cell's z range does not fit a field of `sizeZ` slices. */
export function checkZRange(g: CellGeometry, sizeZ: number): void {
  if (!('z' in g) || !g.z) return;
  const [a, b] = g.z;
  if (b > sizeZ) throw new RangeError(`the z range [${a}, ${b}] goes beyond the field's ${sizeZ} slice${sizeZ === 1 ? '' : 's'}`);
}

/**
 * Voxel indices (ascending, z·width·height + y·width + x with z counted from the first measured slice) of a
 * cell in measured planes `first` .. `first + depth − 1` (0-based slices of the field): a drawn outline on every
 * measured slice of its z range, a 3-D label cell exactly its voxels there, a 2-D label cell on every slice.
 */
export function cellVoxels(g: CellGeometry, width: number, height: number, first = 0, depth = 1): Uint32Array {
  const plane = width * height;
  if (g.kind === 'label3d') {
    const parts: Uint32Array[] = [];
    let n = 0;
    for (let z = Math.max(first, g.z[0] - 1); z <= Math.min(first + depth - 1, g.z[1] - 1); z++) {
      const p = decodeRuns(g.slices[z - (g.z[0] - 1)], plane);
      const off = (z - first) * plane;
      for (let k = 0; k < p.length; k++) p[k] += off;
      parts.push(p);
      n += p.length;
    }
    const out = new Uint32Array(n);
    n = 0;
    for (const p of parts) out.set(p, n), (n += p.length);
    return out;
  }
  const inPlane = cellIndices(g, width, height);
  const [a, b] = zRangeOf(g, first + depth);
  const from = Math.max(first, a - 1), to = Math.min(first + depth - 1, b - 1);
  if (from === first && to === first + depth - 1 && depth === 1) return inPlane;
  return extrudeIndices(inPlane, plane, from - first, to - first);
}

/**
 * The slices (1-based, inclusive) and voxels a stored cell covers in a field of `sizeZ` slices measured in 3D:
 * a drawn or 2-D label cell its `pixelCount` on every slice of its range, a 3-D label cell its own voxels.
 */
export function extentOf(g: CellGeometry, pixelCount: number, sizeZ: number): { zRange: [number, number]; voxelCount: number } {
  const zRange = zRangeOf(g, sizeZ);
  if (g.kind === 'label3d') return { zRange, voxelCount: g.slices.reduce((n, rle) => n + checkRuns(rle), 0) };
  return { zRange, voxelCount: pixelCount * Math.max(0, Math.min(zRange[1], Math.max(1, sizeZ)) - zRange[0] + 1) };
}
