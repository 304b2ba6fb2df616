/**
 * The workspace's Pixel scatter and live preview over every slice of a stack (scatterCore.ts, the worker's
 * code), against the engine's `measureRegion` on the same voxels measured in the same run (the run's path).
 * A 1024 × 1024 × 32 two-channel 16-bit stack (134 MB, inside the 250 MB the browser holds whole): assembling
 * the volume from its 32 slices, one 3-D cell (an ellipse of ~20,000 pixels over 32 slices, ~0.64 M voxels:
 * scatter + live coefficients, every exact one) and the whole field's 33.5 M voxels (the slow exact
 * coefficients are skipped above 2 M voxels, as in the browser); then the same cell read slice by slice for a
 * stack beyond the limit (`regionStream`). `-- W H Z` for another size. Read the CPU columns on a shared machine.
 */
import { cellVoxels, type CellGeometry } from '../../shared/schemas/cells.js';
import { measureRegion } from '../../shared/analysis/index.js';
import { livePreview, prepareRegion, regionStream, scatter, volumeAssembly, type ScatterInput } from '../../src/features/workspace/lib/scatterCore.js';
import { fmt, time } from './timing.js';

const [W, H, Z] = (process.argv.slice(2).length >= 3 ? process.argv.slice(2, 5).map(Number) : [1024, 1024, 32]) as [number, number, number];
const plane = W * H;
let seed = 7;
const rnd = () => ((seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0) / 2 ** 32);
const slices1: Uint16Array[] = [], slices2: Uint16Array[] = [];
for (let z = 0; z < Z; z++) {
  const a = new Uint16Array(plane), b = new Uint16Array(plane);
  for (let i = 0; i < plane; i++) {
    const s = rnd() * 3000;
    a[i] = Math.min(65535, Math.round(s + rnd() * 800));
    b[i] = Math.min(65535, Math.round(0.7 * s + rnd() * 900));
  }
  slices1.push(a), slices2.push(b);
}
console.log(`stack ${W} × ${H} × ${Z}, 16-bit, ${((4 * plane * Z) / 1e6).toFixed(0)} MB of both channels`);

let img: ScatterInput | null = null;
const tAsm = time(() => {
  const v = volumeAssembly(W, H, Z, 65535);
  for (let z = 0; z < Z; z++) v.put(z, slices1[z], slices2[z]);
  img = v.image();
}, 3);
console.log(`assemble ${Z} slices in the worker: ${fmt(tAsm)}`);
const vol = img!;

const cell: CellGeometry = { kind: 'ellipse', cx: W / 2, cy: H / 2, rx: Math.min(W, H) / 12, ry: Math.min(W, H) / 14 };
const voxels = cellVoxels(cell, W, H, 0, Z);
const t1 = 1500, t2 = 1200;
const tCell = time(() => {
  const r = prepareRegion(vol, cell);
  scatter(r, t1, t2);
  livePreview(r, t1, t2);
}, 3);
const tRun = time(() => measureRegion(vol.ch1, vol.ch2, { kind: 'indices', indices: voxels }, { threshold: { method: 'manual', ch1: t1, ch2: t2 } }), 3);
console.log(`one 3-D cell (${voxels.length.toLocaleString('en')} voxels): preview ${fmt(tCell)}; engine measureRegion ${fmt(tRun)}; CPU ratio ${(tCell.cpu / tRun.cpu).toFixed(2)}`);

const tField = time(() => {
  const r = prepareRegion(vol, null);
  scatter(r, t1, t2);
  livePreview(r, t1, t2);
}, 1);
console.log(`whole field (${(plane * Z).toLocaleString('en')} voxels, slow coefficients skipped): ${fmt(tField)}`);

const tStream = time(() => {
  const s = regionStream(W, H, Z, cell, 65535);
  for (let z = 0; z < Z; z++) s.put(z, slices1[z], slices2[z]);
  const r = prepareRegion(s.image()!, cell);
  livePreview(r, t1, t2);
}, 3);
console.log(`the same cell read slice by slice (beyond the limit): ${fmt(tStream)}; CPU ratio to the held volume ${(tStream.cpu / (tCell.cpu + tAsm.cpu)).toFixed(2)}`);
