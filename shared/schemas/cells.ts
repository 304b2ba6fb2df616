/**
 * Cells (regions of interest) of a field: request and response shapes shared by server/routes/cells.ts and
 * the workspace client (src/features/workspace). Coordinates are image pixels; the pixel (x, y) covers
 * [x, x+1) × [y, y+1) and belongs to an outline when its centre (x+0.5, y+0.5) is inside by the even-odd
 * rule (shared/analysis/rasterize.ts is the one implementation).
 */
import { z } from 'zod';
import { rasterize, maskToIndices, type Shape } from '../analysis/rasterize';
import { checkRuns, decodeRuns } from '../analysis/rle';

/** Largest vertex count accepted for one outline (freehand strokes are thinned on the client). */
export const MAX_VERTICES = 20000;
/** Longest cell name. */
export const MAX_CELL_NAME = 120;

const coord = z.number().finite().gte(-1e6).lte(1e6);
const Point = z.tuple([coord, coord]);

export const PolygonGeometry = z.object({ kind: z.literal('polygon'), points: z.array(Point).min(3, 'an outline needs at least 3 points').max(MAX_VERTICES) });
export const FreehandGeometry = z.object({ kind: z.literal('freehand'), points: z.array(Point).min(3, 'an outline needs at least 3 points').max(MAX_VERTICES) });
export const RectGeometry = z.object({
  kind: z.literal('rect'),
  x: coord,
  y: coord,
  width: z.number().finite().positive('width must be > 0'),
  height: z.number().finite().positive('height must be > 0'),
});
export const EllipseGeometry = z.object({
  kind: z.literal('ellipse'),
  cx: coord,
  cy: coord,
  rx: z.number().finite().positive('rx must be > 0'),
  ry: z.number().finite().positive('ry must be > 0'),
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

export const CellGeometrySchema = z.discriminatedUnion('kind', [PolygonGeometry, FreehandGeometry, RectGeometry, EllipseGeometry, LabelGeometry]);
export type CellGeometry = z.infer<typeof CellGeometrySchema>;
/** Geometries a user can draw (label masks only come from an import). */
export const DrawnGeometrySchema = z.discriminatedUnion('kind', [PolygonGeometry, FreehandGeometry, RectGeometry, EllipseGeometry]);
export type DrawnGeometry = z.infer<typeof DrawnGeometrySchema>;

export const CellRole = z.enum(['cell', 'background']);
export type CellRole = z.infer<typeof CellRole>;
export const CellSource = z.enum(['drawn', 'label_image', 'automatic', 'seed', 'geojson']);

export const Cell = z.object({
  id: z.number().int(),
  fieldId: z.number().int(),
  name: z.string(),
  role: CellRole,
  geometry: CellGeometrySchema,
  source: CellSource,
  pixelCount: z.number().int(),
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
  fillHoles: z.boolean().default(true),
  /** split touching cells by a distance-transform watershed */
  split: z.boolean().default(true),
  /** minimum distance (pixels) between two seeds of the watershed: smaller splits more */
  seedDistance: z.number().finite().min(1).max(500).default(10),
  minPixels: z.number().int().min(1).default(30),
  maxPixels: z.number().int().min(1).nullable().default(null),
  /** when true, existing automatic outlines of the field are replaced (deleted or soft-deleted) */
  replace: z.boolean().default(false),
});
export type AutoOutlineRequest = z.input<typeof AutoOutlineRequest>;

export const AutoOutlineResponse = z.object({
  cells: z.array(Cell),
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
export const OUTLINE_KINDS = ['polygon', 'freehand', 'rect', 'ellipse', 'label'] as const;
export const OutlineProperties = z.object({
  name: z.string(),
  /** a background region (for background subtraction), not a cell */
  background: z.boolean(),
  /** how the outline is stored: a rect or ellipse comes back exactly from `shape`, the polygon drawn for other tools */
  kind: z.enum(OUTLINE_KINDS),
  shape: z.union([RectGeometry.omit({ kind: true }), EllipseGeometry.omit({ kind: true })]).optional(),
  /** the label number of a cell imported from a label image */
  label: z.number().int().positive().optional(),
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
      return null;
  }
}

/** Linear pixel indices (y·width + x, ascending) of a cell in a width × height field. */
export function cellIndices(g: CellGeometry, width: number, height: number): Uint32Array {
  const shape = shapeOfGeometry(g);
  if (shape) return maskToIndices(rasterize(shape, width, height));
  return decodeRuns((g as { rle: number[] }).rle, width * height);
}
