/**
 * Plain sentences for a calibration's four values, naming the instrument's own channels. The shift follows the
 * `analyze` convention (channel 2 displaced by (dx, dy) px: ch2(x + dx, y + dy) ≈ ch1(x, y); x right, y down);
 * a21 / a12 are the bleed-through fractions the runs unmix with.
 */
import type { CalibrationValues } from '@shared/schemas/instruments';

export type ChannelNames = { channel1: string; channel2: string };
export type CalibrationKey = keyof CalibrationValues;

export const VALUE_LABEL: Record<CalibrationKey, string> = {
  dx: 'Channel shift, x (px)',
  dy: 'Channel shift, y (px)',
  a21: 'Bleed-through a21',
  a12: 'Bleed-through a12',
};

/** What each value means, before it is given. */
export function valueMeaning(k: CalibrationKey, c: ChannelNames): string {
  switch (k) {
    case 'dx':
      return `How far ${c.channel2} lies to the right of ${c.channel1}, in pixels (negative: to the left). Runs read ${c.channel2} that far over before measuring.`;
    case 'dy':
      return `How far ${c.channel2} lies below ${c.channel1}, in pixels (negative: above).`;
    case 'a21':
      return `The fraction of ${c.channel1}'s signal that shows up in the ${c.channel2} channel, measured on a sample labelled for ${c.channel1} only.`;
    case 'a12':
      return `The fraction of ${c.channel2}'s signal that shows up in the ${c.channel1} channel, measured on a sample labelled for ${c.channel2} only.`;
  }
}

const px = (n: number) => `${Math.abs(n)} px`;
const pct = (f: number) => `${Number((f * 100).toPrecision(3))} %`;

/** One sentence stating what the given values do to a run (or that a part is not measured). */
export function shiftSentence(v: Pick<CalibrationValues, 'dx' | 'dy'>, c: ChannelNames): string {
  if (v.dx === null || v.dy === null) return 'Channel shift not measured: runs using this calibration do not move either channel.';
  if (v.dx === 0 && v.dy === 0) return `${c.channel2} lines up with ${c.channel1}: no shift is applied.`;
  const parts = [v.dx !== 0 ? `${px(v.dx)} to the ${v.dx > 0 ? 'right' : 'left'}` : null, v.dy !== 0 ? `${px(v.dy)} ${v.dy > 0 ? 'down' : 'up'}` : null].filter(Boolean);
  return `Against ${c.channel1}, ${c.channel2} is shifted ${parts.join(' and ')}; runs move it back before measuring, and drop pixels that would come from outside the image.`;
}

export function bleedSentence(v: Pick<CalibrationValues, 'a21' | 'a12'>, c: ChannelNames): string {
  if (v.a21 === null && v.a12 === null) return 'Bleed-through not measured: runs using this calibration do not unmix the channels.';
  const a21 = v.a21 === null ? `bleed of ${c.channel1} into ${c.channel2} not measured (taken as 0)` : `${pct(v.a21)} of ${c.channel1} appears in ${c.channel2}`;
  const a12 = v.a12 === null ? `bleed of ${c.channel2} into ${c.channel1} not measured (taken as 0)` : `${pct(v.a12)} of ${c.channel2} appears in ${c.channel1}`;
  return `${a21}; ${a12}. Runs unmix both channels with these fractions after the shift; values that come out negative become 0.`.replace(/^./, (s) => s.toUpperCase());
}
