/**
 * A field's outlines as GeoJSON (RFC 7946, Butler et al. 2016, doi:10.17487/RFC7946) in pixel coordinates
 * (shared/schemas/cells.ts PIXEL_CONVENTION), both ways.
 *
 * Export: drawn polygons and traces are Polygons with their vertices as drawn (the ring closed by repeating
 * the first position, §3.1.6); boxes are their four corners and ellipses a 72-vertex polygon for other tools,
 * each with its exact `shape` in the properties; label cells are the pixel-edge outline of their mask
 * (shared/analysis/outline-trace.ts): a Polygon with holes, or a MultiPolygon for a mask in several parts.
 *
 * Import (the reverse): `kind: "rect" | "ellipse"` with a valid `shape` is stored as that shape; a Polygon
 * with one ring as a polygon (`kind: "freehand"`: a trace) with its vertices kept; `kind: "label" | "label3d"`, a Polygon
 * with holes or a MultiPolygon as the pixel mask its rings cover (even-odd per polygon, polygons joined; shared/analysis/
 * rasterize.ts fillRings), so holes are kept and export gives back the same outline. Every feature is checked
 * before anything is stored; the first fault is an error naming the feature (index and name) and what is wrong.
 *
 * Stacks: a drawn outline with a z range carries it as `properties.z` ([from, to], 1-based, inclusive) and
 * comes back with it. A 3-D label cell is written as its footprint (the union of its slices) with the slices it
 * spans in `z`; read back it becomes that footprint on every slice of the range, so the exact voxels of a cell
 * whose shape changes from slice to slice travel in the label-stack TIFF instead.
 */
import { HttpError } from '../http/errors.js';
import { fillRings, maskToIndices, type Point } from '../../shared/analysis/rasterize.js';
import { traceOutline } from '../../shared/analysis/outline-trace.js';
import { encodeRuns } from '../../shared/analysis/rle.js';
import {
  EllipseGeometry,
  ZRange,
  checkZRange,
  MAX_CELL_NAME,
  MAX_VERTICES,
  PIXEL_CONVENTION,
  RectGeometry,
  cellIndices,
  type Cell,
  type CellGeometry,
  type CellRole,
  type OutlineCollection,
  type OutlineFeature,
} from '../../shared/schemas/cells.js';

const ELLIPSE_VERTICES = 72;
const close = (ring: Point[]): [number, number][] => [...ring.map((p) => [p[0], p[1]] as [number, number]), [ring[0][0], ring[0][1]]];

function featureOf(c: Cell, width: number, height: number): OutlineFeature {
  const g = c.geometry;
  const props = { name: c.name, background: c.role === 'background', kind: g.kind, cellId: c.id, excluded: c.excluded, ...('z' in g && g.z ? { z: [g.z[0], g.z[1]] as [number, number] } : {}) };
  const base = { type: 'Feature' as const, id: c.id };
  switch (g.kind) {
    case 'polygon':
    case 'freehand':
      return { ...base, geometry: { type: 'Polygon', coordinates: [close(g.points)] }, properties: props };
    case 'rect':
      return {
        ...base,
        geometry: { type: 'Polygon', coordinates: [close([[g.x, g.y], [g.x + g.width, g.y], [g.x + g.width, g.y + g.height], [g.x, g.y + g.height]])] },
        properties: { ...props, shape: { x: g.x, y: g.y, width: g.width, height: g.height } },
      };
    case 'ellipse': {
      const ring: Point[] = [];
      for (let k = 0; k < ELLIPSE_VERTICES; k++) {
        const t = (2 * Math.PI * k) / ELLIPSE_VERTICES;
        ring.push([g.cx + g.rx * Math.cos(t), g.cy + g.ry * Math.sin(t)]);
      }
      return { ...base, geometry: { type: 'Polygon', coordinates: [close(ring)] }, properties: { ...props, shape: { cx: g.cx, cy: g.cy, rx: g.rx, ry: g.ry } } };
    }
    case 'label':
    case 'label3d': {
      const polys = traceOutline(cellIndices(g, width, height), width, height).map((p) => p.rings.map(close));
      const geometry = polys.length === 1 ? { type: 'Polygon' as const, coordinates: polys[0] } : { type: 'MultiPolygon' as const, coordinates: polys };
      return { ...base, geometry, properties: { ...props, label: g.label } };
    }
  }
}

export function outlinesToGeoJson(field: { id: number; name: string; width: number; height: number }, cells: Cell[]): OutlineCollection {
  return {
    type: 'FeatureCollection',
    properties: { coordinates: 'pixel', convention: PIXEL_CONVENTION, fieldId: field.id, field: field.name, width: field.width, height: field.height },
    features: cells.map((c) => featureOf(c, field.width, field.height)),
  };
}

export interface ImportedOutline {
  name: string;
  role: CellRole;
  geometry: CellGeometry;
  pixelCount: number;
}

/** Most features one import may hold (the same guard as label imports). */
export const MAX_IMPORT_FEATURES = 5000;

type Json = unknown;
const isObj = (v: Json): v is Record<string, Json> => typeof v === 'object' && v !== null && !Array.isArray(v);
const show = (v: Json) => {
  const t = JSON.stringify(v) ?? String(v);
  return t.length > 60 ? `${t.slice(0, 57)}...` : t;
};

/**
 * Reads a parsed GeoJSON document into outlines for a width × height field of `sizeZ` slices, or throws a 400
 * naming the feature at fault. A feature's `properties.z` ([from, to], 1-based) gives a drawn outline that z
 * range, and makes a mask (a label, a polygon with holes, a multipolygon) a 3-D label cell with the mask on
 * every slice of the range.
 */
export function readOutlines(doc: Json, width: number, height: number, sizeZ = 1): ImportedOutline[] {
  const fail = (message: string, path = '') => new HttpError(400, message, path ? { issues: [{ path, message }] } : undefined);
  if (!isObj(doc)) throw fail(`a GeoJSON file holds an object, received ${show(doc)}`);
  let features: Json[];
  if (doc.type === 'FeatureCollection') {
    if (!Array.isArray(doc.features)) throw fail(`"features" of the FeatureCollection must be an array, received ${show(doc.features)}`, 'features');
    features = doc.features;
  } else if (doc.type === 'Feature') features = [doc];
  else throw fail(`expected a GeoJSON FeatureCollection or Feature, received type ${show(doc.type)}`, 'type');
  const declared = isObj(doc.properties) ? doc.properties.coordinates : undefined;
  if (declared !== undefined && declared !== 'pixel') throw fail(`the file says its coordinates are ${show(declared)}; outlines are imported in pixel coordinates ("coordinates": "pixel")`, 'properties.coordinates');
  if (features.length === 0) throw fail('the file has no features; nothing to import', 'features');
  if (features.length > MAX_IMPORT_FEATURES) throw fail(`the file has ${features.length} features; at most ${MAX_IMPORT_FEATURES} can be imported at once`, 'features');

  const labelsTaken = new Set<number>();
  const out: ImportedOutline[] = [];
  const pending: { i: number; polygons: Point[][][]; label: number | null; name: string; role: CellRole; z: [number, number] | null }[] = [];
  features.forEach((f, i) => {
    const props = isObj(f) && isObj(f.properties) ? f.properties : {};
    const nameText = typeof props.name === 'string' && props.name.trim() ? ` ("${props.name.trim().slice(0, 40)}")` : '';
    const at = `feature ${i + 1}${nameText}`;
    const path = doc.type === 'Feature' ? '' : `features.${i}`;
    const bad = (what: string, sub = '') => fail(`${at}: ${what}`, [path, sub].filter(Boolean).join('.'));
    if (!isObj(f) || f.type !== 'Feature') throw bad(`expected an object of type "Feature", received ${show(isObj(f) ? f.type : f)}`);
    if (f.properties !== undefined && f.properties !== null && !isObj(f.properties)) throw bad(`properties must be an object, received ${show(f.properties)}`, 'properties');
    // properties
    let name = `Outline ${i + 1}`;
    if (props.name !== undefined) {
      if (typeof props.name !== 'string' || !props.name.trim()) throw bad(`name must be non-empty text, received ${show(props.name)}`, 'properties.name');
      if (props.name.trim().length > MAX_CELL_NAME) throw bad(`name has ${props.name.trim().length} characters; at most ${MAX_CELL_NAME}`, 'properties.name');
      name = props.name.trim();
    }
    if (props.background !== undefined && typeof props.background !== 'boolean') throw bad(`background must be true or false, received ${show(props.background)}`, 'properties.background');
    const role: CellRole = props.background === true ? 'background' : 'cell';
    let zr: [number, number] | null = null;
    if (props.z !== undefined) {
      const parsed = ZRange.safeParse(props.z);
      if (!parsed.success) throw bad(`z must be [first slice, last slice], counted from 1, received ${show(props.z)} (${parsed.error.issues[0].message})`, 'properties.z');
      zr = parsed.data;
      try {
        checkZRange({ kind: 'rect', x: 0, y: 0, width: 1, height: 1, z: zr }, sizeZ);
      } catch (e) {
        throw bad((e as Error).message, 'properties.z');
      }
    }
    const zPart = zr ? { z: zr } : {};
    // geometry
    const g = f.geometry;
    if (!isObj(g)) throw bad(`has no geometry (received ${show(g)}); give a Polygon or MultiPolygon`, 'geometry');
    if (g.type !== 'Polygon' && g.type !== 'MultiPolygon') throw bad(`geometry type ${show(g.type)} is not an outline; give a Polygon or MultiPolygon`, 'geometry.type');
    const polysRaw = g.type === 'Polygon' ? [g.coordinates] : g.coordinates;
    if (!Array.isArray(polysRaw) || (g.type === 'MultiPolygon' && polysRaw.length === 0)) throw bad(`coordinates of the ${g.type} must be a non-empty array, received ${show(g.coordinates)}`, 'geometry.coordinates');
    const polygons: Point[][][] = polysRaw.map((rings: Json, pi: number) => {
      const where = g.type === 'MultiPolygon' ? `polygon ${pi + 1}, ` : '';
      if (!Array.isArray(rings) || rings.length === 0) throw bad(`${where}a polygon is a non-empty array of rings, received ${show(rings)}`, 'geometry.coordinates');
      return rings.map((ring: Json, ri: number) => {
        const r = `${where}ring ${ri + 1}`;
        if (!Array.isArray(ring)) throw bad(`${r} must be an array of positions, received ${show(ring)}`, 'geometry.coordinates');
        if (ring.length < 4) throw bad(`${r} has ${ring.length} positions; a closed ring needs at least 4 (RFC 7946 §3.1.6)`, 'geometry.coordinates');
        if (ring.length - 1 > MAX_VERTICES) throw bad(`${r} has ${ring.length - 1} vertices; at most ${MAX_VERTICES}`, 'geometry.coordinates');
        const pts = ring.map((p: Json, k: number): Point => {
          if (!Array.isArray(p) || p.length !== 2 || !p.every((v) => typeof v === 'number' && Number.isFinite(v)))
            throw bad(`${r}, position ${k + 1} must be two finite numbers [x, y] in pixels, received ${show(p)}`, 'geometry.coordinates');
          if (Math.abs(p[0]) > 1e6 || Math.abs(p[1]) > 1e6) throw bad(`${r}, position ${k + 1} ${show(p)} is beyond ±1e6 pixels`, 'geometry.coordinates');
          return [p[0], p[1]];
        });
        const [a, b] = [pts[0], pts[pts.length - 1]];
        if (a[0] !== b[0] || a[1] !== b[1]) throw bad(`${r} is not closed: it starts at ${show(a)} and ends at ${show(b)} (RFC 7946 §3.1.6)`, 'geometry.coordinates');
        return pts.slice(0, -1);
      });
    });
    // stored form
    const kind = props.kind;
    if (kind === 'rect' || kind === 'ellipse') {
      const parsed = (kind === 'rect' ? RectGeometry : EllipseGeometry).safeParse({ kind, ...(isObj(props.shape) ? props.shape : {}), ...zPart });
      if (!parsed.success) throw bad(`kind "${kind}" needs its exact shape in properties.shape (${parsed.error.issues[0].path.join('.') || 'shape'}: ${parsed.error.issues[0].message})`, 'properties.shape');
      out[i] = { name, role, geometry: parsed.data, pixelCount: count(parsed.data, at) };
    } else if (kind !== 'label' && kind !== 'label3d' && polygons.length === 1 && polygons[0].length === 1) {
      const geometry: CellGeometry = { kind: kind === 'freehand' ? 'freehand' : 'polygon', points: polygons[0][0], ...zPart };
      out[i] = { name, role, geometry, pixelCount: count(geometry, at) };
    } else {
      const label = typeof props.label === 'number' && Number.isInteger(props.label) && props.label > 0 && !labelsTaken.has(props.label) ? props.label : null;
      if (label !== null) labelsTaken.add(label);
      pending.push({ i, polygons, label, name, role, z: zr });
    }
  });
  // masks: polygons with holes and multipolygons
  let nextLabel = 1;
  const mask = pending.length ? new Uint8Array(width * height) : null;
  const part = pending.length ? new Uint8Array(width * height) : null;
  for (const p of pending) {
    mask!.fill(0);
    for (const rings of p.polygons) {
      part!.fill(0);
      fillRings(part!, width, height, rings);
      for (let k = 0; k < part!.length; k++) mask![k] |= part![k];
    }
    const indices = maskToIndices(mask!);
    const at = `feature ${p.i + 1} ("${p.name.slice(0, 40)}")`;
    if (indices.length === 0) throw new HttpError(400, `${at}: the outline covers no pixel centre of the ${width} × ${height} field`);
    let label = p.label;
    if (label === null) {
      while (labelsTaken.has(nextLabel)) nextLabel++;
      label = nextLabel;
      labelsTaken.add(label);
    }
    const rle = encodeRuns(indices, width * height);
    const geometry: CellGeometry = p.z ? { kind: 'label3d', label, z: p.z, slices: Array.from({ length: p.z[1] - p.z[0] + 1 }, () => rle) } : { kind: 'label', label, rle };
    out[p.i] = { name: p.name, role: p.role, geometry, pixelCount: indices.length };
  }
  return out;

  function count(geometry: CellGeometry, at: string): number {
    let n: number;
    try {
      n = cellIndices(geometry, width, height).length;
    } catch (e) {
      throw new HttpError(400, `${at}: ${(e as Error).message}`);
    }
    if (n === 0) throw new HttpError(400, `${at}: the outline covers no pixel centre of the ${width} × ${height} field`);
    return n;
  }
}
