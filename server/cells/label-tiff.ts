/**
 * A field's cells as a label image (0 = no cell; each cell one positive value), the format the label import
 * reads (shared/analysis/labels.ts): written as an uncompressed TIFF (server/images/tiff-write.ts), 16-bit
 * when every label fits, else 32-bit. A cell imported from a label image or stack keeps its label number, so a
 * label import exported and imported again gives the same cells; other cells take the next free numbers in id
 * order. Background regions are not cells and are left out.
 *
 * A stack with 3-D cells (3-D label cells or outlines with a z range) is written as a label stack, one page
 * per slice of the field: each cell's voxels as runs measure them (shared/schemas/cells.ts `cellVoxels`: an
 * outline on every slice of its z range, every slice when it has none; a 3-D label cell exactly its voxels),
 * which the 3-D label import reads back as the same voxels. Otherwise one page, the cells' planes.
 *
 * A pixel (voxel) can carry one label only: cells that share one are refused (409) naming both and where,
 * rather than one silently covering the other.
 */
import { HttpError, conflict } from '../http/errors.js';
import { writeGrayTiff } from '../images/tiff-write.js';
import { cellIndices, cellVoxels, type Cell } from '../../shared/schemas/cells.js';

/** Whether the cells need a label stack: the field has slices and some cell does not cover all of them alike. */
export function hasDepth(cells: readonly Cell[], sizeZ: number): boolean {
  return sizeZ > 1 && cells.some((c) => c.role === 'cell' && (c.geometry.kind === 'label3d' || ('z' in c.geometry && !!c.geometry.z)));
}

/** The label image (`depth` planes one after the other, 1 or the field's slices) and the label number of each cell id. */
export function labelImageOf(cells: Cell[], width: number, height: number, sizeZ = 1): { labels: Uint32Array; depth: number; numbers: Map<number, number> } {
  const own = cells.filter((c) => c.role === 'cell');
  if (own.length === 0) throw conflict('this field has no cells to export as a label image');
  const numbers = new Map<number, number>();
  const taken = new Set<number>();
  for (const c of own)
    if ((c.geometry.kind === 'label' || c.geometry.kind === 'label3d') && !taken.has(c.geometry.label)) {
      numbers.set(c.id, c.geometry.label);
      taken.add(c.geometry.label);
    }
  let next = 1;
  for (const c of own) {
    if (numbers.has(c.id)) continue;
    while (taken.has(next)) next++;
    numbers.set(c.id, next);
    taken.add(next);
  }
  const depth = hasDepth(own, sizeZ) ? sizeZ : 1;
  const plane = width * height;
  const labels = new Uint32Array(plane * depth);
  const owner = new Map<number, Cell>();
  for (const c of own) {
    const v = numbers.get(c.id)!;
    owner.set(v, c);
    for (const p of depth > 1 ? cellVoxels(c.geometry, width, height, 0, depth) : cellIndices(c.geometry, width, height)) {
      if (labels[p] !== 0) {
        const other = owner.get(labels[p])!;
        const i = p % plane, x = i % width, y = (i - x) / width, z = (p - i) / plane;
        const where = depth > 1 ? `voxel (${x}, ${y}) of slice ${z + 1}` : `pixel (${x}, ${y})`;
        throw new HttpError(409, `cells "${other.name}" (id ${other.id}) and "${c.name}" (id ${c.id}) share ${where}; a label image gives each ${depth > 1 ? 'voxel' : 'pixel'} one cell, so remove the overlap first`);
      }
      labels[p] = v;
    }
  }
  return { labels, depth, numbers };
}

export function labelTiffOf(cells: Cell[], width: number, height: number, sizeZ = 1): Buffer {
  const { labels, depth } = labelImageOf(cells, width, height, sizeZ);
  let max = 0;
  for (const v of labels) if (v > max) max = v;
  const plane = width * height;
  const pages = Array.from({ length: depth }, (_, z) => {
    const page = labels.subarray(z * plane, (z + 1) * plane);
    return max <= 0xffff ? Uint16Array.from(page) : page.slice();
  });
  return writeGrayTiff(pages, width, height);
}
