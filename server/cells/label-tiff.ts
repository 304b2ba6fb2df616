/**
 * A field's cells as a label image (0 = no cell; each cell one positive value), the format the label import
 * reads (shared/analysis/labels.ts): written as an uncompressed TIFF (server/images/tiff-write.ts), 16-bit
 * when every label fits, else 32-bit. A cell imported from a label image keeps its label number, so a label
 * import exported and imported again gives the same cells; other cells take the next free numbers in id
 * order. Background regions are not cells and are left out. A pixel can carry one label only: cells that
 * share a pixel are refused (409) naming both, rather than one silently covering the other.
 */
import { HttpError, conflict } from '../http/errors.js';
import { writeGrayTiff } from '../images/tiff-write.js';
import { cellIndices, type Cell } from '../../shared/schemas/cells.js';

export function labelImageOf(cells: Cell[], width: number, height: number): { labels: Uint32Array; numbers: Map<number, number> } {
  const own = cells.filter((c) => c.role === 'cell');
  if (own.length === 0) throw conflict('this field has no cells to export as a label image');
  const numbers = new Map<number, number>();
  const taken = new Set<number>();
  for (const c of own)
    if (c.geometry.kind === 'label' && !taken.has(c.geometry.label)) {
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
  const labels = new Uint32Array(width * height);
  const owner = new Map<number, Cell>();
  for (const c of own) {
    const v = numbers.get(c.id)!;
    owner.set(v, c);
    for (const p of cellIndices(c.geometry, width, height)) {
      if (labels[p] !== 0) {
        const other = owner.get(labels[p])!;
        const x = p % width;
        throw new HttpError(409, `cells "${other.name}" (id ${other.id}) and "${c.name}" (id ${c.id}) share pixel (${x}, ${(p - x) / width}); a label image gives each pixel one cell, so remove the overlap first`);
      }
      labels[p] = v;
    }
  }
  return { labels, numbers };
}

export function labelTiffOf(cells: Cell[], width: number, height: number): Buffer {
  const { labels } = labelImageOf(cells, width, height);
  let max = 0;
  for (const v of labels) if (v > max) max = v;
  return writeGrayTiff([max <= 0xffff ? Uint16Array.from(labels) : labels], width, height);
}
