/** What a list shows when there is nothing in it yet, with the next step. */
import { cx } from '@/lib/cx';

export function EmptyState({ title, children, action, className }: { title: string; children?: React.ReactNode; action?: React.ReactNode; className?: string }) {
  return (
    <div className={cx('rounded-lg border border-dashed border-ink/20 px-6 py-8 text-center', className)}>
      <p className="font-medium text-ink">{title}</p>
      {children && <div className="mt-1 text-sm text-ink-soft">{children}</div>}
      {action && <div className="mt-4 flex justify-center">{action}</div>}
    </div>
  );
}
