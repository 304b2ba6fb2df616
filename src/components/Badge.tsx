/** A short status word. Tones are our palette, not a code borrowed from elsewhere. */
import { cx } from '@/lib/cx';

export type BadgeTone = 'neutral' | 'accent' | 'warn' | 'danger';
const tones: Record<BadgeTone, string> = {
  neutral: 'bg-ink/8 text-ink-soft border-ink/10',
  accent: 'bg-accent-soft text-accent-dark border-accent/20',
  warn: 'bg-warn-soft text-warn border-warn/20',
  danger: 'bg-danger-soft text-danger border-danger/20',
};

export function Badge({ tone = 'neutral', children, className }: { tone?: BadgeTone; children: React.ReactNode; className?: string }) {
  return <span className={cx('inline-flex items-center rounded-full border px-2 py-0.5 text-xs font-medium', tones[tone], className)}>{children}</span>;
}
