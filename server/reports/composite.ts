/**
 * A small two-channel composite PNG of a field for the frozen report (data URL, at most 512 px on the long
 * side): channel 1 in green, channel 2 in magenta (a colour-blind-safe pair; common practice), each channel
 * scaled linearly between its minimum and its 99.5th percentile. When the intake work's preview module offers
 * `renderCompositePng(ctx, fieldId, { max })` it is used instead, so the report and the field view agree.
 */
import sharp from 'sharp';
import type { AppContext } from '../context.js';
import type { fields } from '../db/schema.js';
import { optionalModule } from './optional.js';

export const COMPOSITE_MAX_PX = 512;

type Pixels = { width: number; height: number; ch1: ArrayLike<number>; ch2: ArrayLike<number> };

function range(a: ArrayLike<number>): [number, number] {
  const n = a.length;
  if (!n) return [0, 1];
  // percentile on a strided sample keeps this O(n) with a small sort (common practice for display ranges)
  const step = Math.max(1, Math.floor(n / 65536));
  const s: number[] = [];
  let lo = Infinity;
  for (let i = 0; i < n; i += step) {
    s.push(a[i]);
    if (a[i] < lo) lo = a[i];
  }
  s.sort((x, y) => x - y);
  const hi = s[Math.min(s.length - 1, Math.floor(0.995 * (s.length - 1)))];
  return [lo, hi > lo ? hi : lo + 1];
}

export async function compositeFromPixels(px: Pixels, max = COMPOSITE_MAX_PX) {
  const [lo1, hi1] = range(px.ch1);
  const [lo2, hi2] = range(px.ch2);
  const n = px.width * px.height;
  const rgb = Buffer.alloc(n * 3);
  const s1 = 255 / (hi1 - lo1);
  const s2 = 255 / (hi2 - lo2);
  for (let i = 0; i < n; i++) {
    const g = Math.max(0, Math.min(255, (px.ch1[i] - lo1) * s1));
    const m = Math.max(0, Math.min(255, (px.ch2[i] - lo2) * s2));
    rgb[i * 3] = m;
    rgb[i * 3 + 1] = g;
    rgb[i * 3 + 2] = m;
  }
  const png = await sharp(rgb, { raw: { width: px.width, height: px.height, channels: 3 } })
    .resize({ width: max, height: max, fit: 'inside', withoutEnlargement: true, kernel: 'lanczos3' })
    .png({ compressionLevel: 9 })
    .toBuffer();
  return { png: `data:image/png;base64,${png.toString('base64')}`, ranges: { lo1, hi1, lo2, hi2 } };
}

/** null when the pixels cannot be read (the report then shows outlines on a blank frame). */
export async function renderComposite(ctx: AppContext, f: typeof fields.$inferSelect) {
  try {
    const preview = await optionalModule('preview');
    if (preview && typeof preview.renderCompositePng === 'function') {
      const buf = (await (preview.renderCompositePng as (c: AppContext, id: number, o: object) => Promise<Buffer>)(ctx, f.id, { max: COMPOSITE_MAX_PX })) as Buffer;
      return { png: `data:image/png;base64,${Buffer.from(buf).toString('base64')}`, ranges: null };
    }
    const intake = await optionalModule('intake');
    if (!intake || typeof intake.loadFieldPixels !== 'function') return null;
    const px = await (intake.loadFieldPixels as (c: AppContext, id: number, o: object) => Promise<Pixels>)(ctx, f.id, {});
    return await compositeFromPixels(px);
  } catch {
    return null;
  }
}
