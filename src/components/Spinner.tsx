/** A small turning ring; `label` is read by screen readers (empty string: decorative). */
import { cx } from '@/lib/cx';

export function Spinner({ size = 'md', label = 'Loading…', className }: { size?: 'sm' | 'md'; label?: string; className?: string }) {
  const dim = size === 'sm' ? 'h-3.5 w-3.5 border-2' : 'h-5 w-5 border-2';
  return (
    <span role={label ? 'status' : undefined} className={cx('inline-flex items-center gap-2 text-ink-soft', className)}>
      <span aria-hidden="true" className={cx('inline-block animate-spin rounded-full border-current border-r-transparent', dim)} />
      {label && <span className="text-sm">{label}</span>}
    </span>
  );
}

/** A centred loading line for a page or a card. */
export function Loading({ label = 'Loading…' }: { label?: string }) {
  return (
    <div className="py-8 flex justify-center">
      <Spinner label={label} />
    </div>
  );
}
