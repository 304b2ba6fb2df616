/** The title block of a page: optional trail back, title, a line of context, and the page's actions. */
import { useEffect } from 'react';
import { Link } from 'react-router';
import { focusRing } from '@/lib/cx';

export type Crumb = { to: string; label: string };

export function PageHeader({ title, description, actions, trail }: { title: React.ReactNode; description?: React.ReactNode; actions?: React.ReactNode; trail?: Crumb[] }) {
  useEffect(() => {
    if (typeof title === 'string') document.title = `${title} · Syntopy`;
  }, [title]);
  return (
    <header className="mb-6 flex flex-wrap items-end justify-between gap-4 border-b border-ink/10 pb-4">
      <div className="min-w-0">
        {trail && trail.length > 0 && (
          <nav aria-label="Breadcrumb" className="mb-1 text-sm text-ink-soft">
            <ol className="flex flex-wrap items-center gap-1">
              {trail.map((c) => (
                <li key={c.to} className="flex items-center gap-1">
                  <Link to={c.to} className={`rounded hover:text-accent-dark hover:underline ${focusRing}`}>
                    {c.label}
                  </Link>
                  <span aria-hidden="true">/</span>
                </li>
              ))}
            </ol>
          </nav>
        )}
        <h1>{title}</h1>
        {description && <p className="mt-1 max-w-3xl text-sm text-ink-soft">{description}</p>}
      </div>
      {actions && <div className="flex flex-wrap items-center gap-2">{actions}</div>}
    </header>
  );
}
