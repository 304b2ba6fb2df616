/** A notice box for the product's cautions (resolution limits, saturation, research use only) and other warnings. */
import { cx } from '@/lib/cx';

export function Caution({ title, children, tone = 'warn', className }: { title?: string; children: React.ReactNode; tone?: 'warn' | 'info' | 'danger'; className?: string }) {
  const look = tone === 'danger' ? 'border-danger/30 bg-danger-soft text-danger' : tone === 'info' ? 'border-accent/25 bg-accent-soft/60 text-accent-dark' : 'border-warn/30 bg-warn-soft text-warn';
  return (
    <aside role="note" className={cx('rounded-md border-l-4 px-4 py-3 text-sm', look, className)}>
      {title && <p className="font-semibold">{title}</p>}
      <div className={cx('text-ink', title && 'mt-0.5')}>{children}</div>
    </aside>
  );
}

/** Errors as a message in a box (for failed loads and failed actions without a field). */
export function ErrorNotice({ error, className }: { error: unknown; className?: string }) {
  if (!error) return null;
  const message = error instanceof Error ? error.message : String(error);
  return (
    <div role="alert" className={cx('rounded-md border border-danger/30 bg-danger-soft px-4 py-3 text-sm text-danger', className)}>
      {message}
    </div>
  );
}
