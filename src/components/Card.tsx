/** A white sheet on the paper background. */
import type { HTMLAttributes } from 'react';
import { cx } from '@/lib/cx';

export function Card({ className, title, actions, children, ...rest }: HTMLAttributes<HTMLElement> & { title?: React.ReactNode; actions?: React.ReactNode }) {
  return (
    <section className={cx('rounded-lg border border-ink/10 bg-white p-4 shadow-[0_1px_0_rgba(31,42,51,0.04)]', className)} {...rest}>
      {(title || actions) && (
        <header className="mb-3 flex items-center justify-between gap-3">
          {title && <h2 className="text-base font-semibold">{title}</h2>}
          {actions && <div className="flex items-center gap-2">{actions}</div>}
        </header>
      )}
      {children}
    </section>
  );
}
