/**
 * What a version's values were measured from in the app: the bead field with its cross-correlation curves
 * and the composite before and after alignment (drawn by the page's `composite` slot), and the control
 * fields of each bleed-through coefficient. A value changed by hand since is said so.
 */
import type { ReactNode } from 'react';
import { Link } from 'react-router';
import { formatDateTime } from '@shared/format/datetime';
import { formatFixed } from '@shared/format/number';
import { formatCount } from '@shared/format/number';
import type { BleedSource, CalibrationDetail } from '@shared/schemas/instruments';
import type { ChannelNames } from '../lib/sentences';
import { CrossCorrelationChart } from './CrossCorrelationChart';

export type CompositeSlot = (fieldId: number, shift: { dx: number; dy: number } | null) => ReactNode;

const fieldLink = (f: { id: number; name: string; studyId: number }) => (
  <Link key={f.id} className="underline" to={`/studies/${f.studyId}/fields/${f.id}`}>
    {f.name}
  </Link>
);

function BleedLine({ k, s, current, channels }: { k: 'a21' | 'a12'; s: BleedSource; current: number | null; channels: ChannelNames }) {
  const labelled = k === 'a21' ? channels.channel1 : channels.channel2;
  return (
    <li data-testid={`source-${k}`}>
      {k} = {formatFixed(s.value, 4)} from {s.fields.length === 1 ? 'the control field ' : 'the control fields '}
      {s.fields.map((f, i) => (
        <span key={f.id}>
          {i > 0 ? ', ' : ''}
          {fieldLink(f)}
        </span>
      ))}{' '}
      (labelled for {labelled} only; {formatCount(s.pixels)} pixels{s.alignedWith ? `; aligned by (${formatFixed(s.alignedWith.dx, 2)}, ${formatFixed(s.alignedWith.dy, 2)}) px first` : ''}), measured{' '}
      {formatDateTime(s.measuredAt)} by {s.measuredBy?.name ?? 'someone'}.
      {s.slope !== s.value && ` The slope came out at ${formatFixed(s.slope, 4)}, slightly below 0 from noise, and was recorded as 0.`}
      {current !== s.value && <strong className="font-medium"> Changed by hand since: now {current === null ? 'not given' : formatFixed(current, 4)}.</strong>}
    </li>
  );
}

export function CalibrationSourcesView({ c, channels, composite }: { c: CalibrationDetail; channels: ChannelNames; composite?: CompositeSlot }) {
  const { shift, a21, a12 } = c.sources;
  if (!shift && !a21 && !a12) return <p className="text-sm text-ink-soft">Nothing in this version was measured in the app yet: its values were typed in.</p>;
  const edited = shift && (c.dx !== shift.dx || c.dy !== shift.dy);
  return (
    <div className="space-y-4" data-testid="calibration-sources">
      {shift && (
        <div className="space-y-3">
          <p className="text-sm" data-testid="source-shift">
            Shift ({formatFixed(shift.dx, 2)}, {formatFixed(shift.dy, 2)}) px measured on the bead field {fieldLink(shift.field)} ({shift.z}
            {shift.peak !== null ? `; correlation peak ${formatFixed(shift.peak, 3)}` : ''}) on {formatDateTime(shift.measuredAt)} by {shift.measuredBy?.name ?? 'someone'}.
            {edited && (
              <strong className="font-medium">
                {' '}
                Changed by hand since: now {c.dx === null ? 'not given' : `(${formatFixed(c.dx, 2)}, ${formatFixed(c.dy, 2)}) px`}.
              </strong>
            )}
          </p>
          <div>
            <h3 className="text-sm font-semibold">Cross-correlation of {channels.channel1} and {channels.channel2}</h3>
            <p className="mb-2 text-xs text-ink-soft">Pearson&apos;s r as {channels.channel2} is moved pixel by pixel; it should peak at the measured shift (dashed).</p>
            <CrossCorrelationChart curves={shift.curves} dx={shift.dx} dy={shift.dy} />
          </div>
          {composite?.(shift.field.id, c.dx !== null && c.dy !== null ? { dx: c.dx, dy: c.dy } : null)}
        </div>
      )}
      {(a21 || a12) && (
        <ul className="list-disc space-y-1 pl-5 text-sm">
          {a21 && <BleedLine k="a21" s={a21} current={c.a21} channels={channels} />}
          {a12 && <BleedLine k="a12" s={a12} current={c.a12} channels={channels} />}
        </ul>
      )}
    </div>
  );
}
