/**
 * The one mapping from a stored cell to the voxels a run measures (shared/schemas/cells.ts `cellVoxels`) and
 * the checks on z ranges and 3-D label geometries. Identity cases (common practice): an outline without a z
 * range is its plane on every measured slice; a 3-D label cell with the same code on every slice is that
 * extrusion; a window of measured slices takes exactly the cell's voxels inside it, renumbered from its first.
 */
import { describe, expect, it } from 'vitest';
import { CellGeometrySchema, DrawnGeometrySchema, cellIndices, cellVoxels, checkZRange, extentOf, type CellGeometry } from '../../shared/schemas/cells.js';
import { extrudeIndices } from '../../shared/analysis/volume.js';

const W = 6, H = 5, P = W * H;
const box = { kind: 'rect' as const, x: 1, y: 1, width: 2, height: 2 };

describe('cellVoxels', () => {
  it('an outline without a z range is its plane on every measured slice', () => {
    const plane = cellIndices(box, W, H);
    expect(Array.from(cellVoxels(box, W, H))).toEqual(Array.from(plane));
    expect(Array.from(cellVoxels(box, W, H, 0, 4))).toEqual(Array.from(extrudeIndices(plane, P, 0, 3)));
  });
  it('a z range keeps only its slices; a window of slices is renumbered from its first', () => {
    const g: CellGeometry = { ...box, z: [2, 3] };
    const plane = cellIndices(box, W, H);
    expect(Array.from(cellVoxels(g, W, H, 0, 4))).toEqual(Array.from(extrudeIndices(plane, P, 1, 2)));
    // slices 3..4 measured (0-based 2..3): only slice 3 of the range, as the window's first plane
    expect(Array.from(cellVoxels(g, W, H, 2, 2))).toEqual(Array.from(plane));
    // one slice outside the range: nothing
    expect(cellVoxels(g, W, H, 3, 1).length).toBe(0);
  });
  it('a 3-D label cell is exactly its voxels; the same code on every slice is the extrusion of that plane', () => {
    const rle = [7, 2, 13, 2];
    const same: CellGeometry = { kind: 'label3d', label: 1, z: [1, 3], slices: [rle, rle, rle] };
    expect(Array.from(cellVoxels(same, W, H, 0, 3))).toEqual(Array.from(extrudeIndices(Uint32Array.from([7, 8, 13, 14]), P, 0, 2)));
    const g: CellGeometry = { kind: 'label3d', label: 2, z: [2, 3], slices: [[0, 1], []] };
    expect(Array.from(cellVoxels(g, W, H, 0, 3))).toEqual([P]);
    expect(Array.from(cellVoxels(g, W, H, 1, 1))).toEqual([0]);
    expect(extentOf(g, 1, 3)).toEqual({ zRange: [2, 3], voxelCount: 1 });
    expect(Array.from(cellIndices(same, W, H))).toEqual([7, 8, 13, 14]);
  });
  it('voxel counts: the plane on every slice of the range', () => {
    expect(extentOf(box, 4, 5)).toEqual({ zRange: [1, 5], voxelCount: 20 });
    expect(extentOf({ ...box, z: [2, 4] }, 4, 5)).toEqual({ zRange: [2, 4], voxelCount: 12 });
    expect(extentOf(box, 4, 1)).toEqual({ zRange: [1, 1], voxelCount: 4 });
  });
});

describe('z range checks', () => {
  it('refuses a range beyond the field, backwards or from 0, quoting it', () => {
    expect(() => checkZRange({ ...box, z: [2, 6] }, 5)).toThrow("the z range [2, 6] goes beyond the field's 5 slices");
    expect(() => checkZRange({ ...box, z: [1, 5] }, 5)).not.toThrow();
    const back = DrawnGeometrySchema.safeParse({ ...box, z: [3, 2] });
    expect(back.success).toBe(false);
    expect(back.error!.issues[0].message).toBe('a z range runs from a slice to the same or a later one, got [3, 2]');
    expect(DrawnGeometrySchema.safeParse({ ...box, z: [0, 2] }).success).toBe(false);
  });
  it('a 3-D label geometry needs one code per slice of its range, each a valid code', () => {
    const bad = CellGeometrySchema.safeParse({ kind: 'label3d', label: 1, z: [1, 3], slices: [[0, 1]] });
    expect(bad.success).toBe(false);
    expect(bad.error!.issues[0].message).toBe('the z range [1, 3] covers 3 slices, but one slice code was given');
    expect(CellGeometrySchema.safeParse({ kind: 'label3d', label: 1, z: [1, 1], slices: [[4, 1, 2, 1]] }).success).toBe(false);
    expect(CellGeometrySchema.safeParse({ kind: 'label3d', label: 1, z: [1, 2], slices: [[4, 1], []] }).success).toBe(true);
  });
});
