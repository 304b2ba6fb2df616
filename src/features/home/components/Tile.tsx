/** A count with its meaning and where to act on it. */
import { Link } from 'react-router';
import { cx, focusRing } from '@/lib/cx';
import { Spinner } from '@/components/Spinner';

export function Tile({ label, value, to, note, tone = 'neutral', pending }: { label: string; value: number | null; to: string; note?: string; tone?: 'neutral' | 'attention'; pending?: boolean }) {
  const attention = tone === 'attention' && (value ?? 0) > 0;
  return (
    <Link to={to} className={cx('block rounded-lg border bg-white p-4 transition-colors hover:border-accent/50', attention ? 'border-warn/40' : 'border-ink/10', focusRing)}>
      <span className="block text-sm text-ink-soft">{label}</span>
      <span className={cx('mt-1 block text-3xl font-semibold tabular-nums', attention ? 'text-warn' : 'text-ink')}>
        {pending ? <Spinner size="sm" label="" /> : value === null ? '—' : value}
      </span>
      {note && <span className="mt-1 block text-xs text-ink-soft">{note}</span>}
    </Link>
  );
}
