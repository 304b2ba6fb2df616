/** The signed-in frame: a left rail with the user's places, and the page. Redirects to sign-in when signed out. */
import { Navigate, NavLink, Outlet, useLocation } from 'react-router';
import { useMe } from '@/features/auth';
import type { Role } from '@shared/schemas/auth';
import { SignOutButton } from '@/features/auth';

const NAV: { to: string; label: string; roles?: Role[] }[] = [
  { to: '/', label: 'Home' },
  { to: '/studies', label: 'Studies' },
  { to: '/recipes', label: 'Recipes', roles: ['microscopist', 'facility_manager', 'biologist'] },
  { to: '/review', label: 'Review queue', roles: ['facility_manager'] },
  { to: '/runs', label: 'Runs', roles: ['microscopist', 'facility_manager', 'biologist'] },
  { to: '/people', label: 'People & labs', roles: ['facility_manager'] },
  { to: '/outbox', label: 'Outbox', roles: ['facility_manager'] },
  { to: '/usage', label: 'Facility usage', roles: ['facility_manager'] },
  { to: '/account', label: 'Account' },
  { to: '/api-reference', label: 'API reference' },
];

export function Shell() {
  const me = useMe();
  const loc = useLocation();
  if (me.isPending) return <div className="p-8 text-ink-soft">Loading…</div>;
  if (me.isError) return <div className="p-8 text-danger">The server could not be reached: {String(me.error.message)}</div>;
  if (!me.data) return <Navigate to={`/signin?next=${encodeURIComponent(loc.pathname + loc.search)}`} replace />;
  const user = me.data;
  return (
    <div className="min-h-screen flex">
      <a href="#main" className="sr-only focus:not-sr-only focus:absolute focus:left-2 focus:top-2 focus:z-50 focus:rounded focus:bg-white focus:px-3 focus:py-2">
        Skip to the page
      </a>
      <nav className="no-print w-52 shrink-0 border-r border-ink/10 bg-white/60 px-3 py-4 flex flex-col gap-1" aria-label="Main">
        <div className="px-2 pb-4">
          <div className="text-xl font-bold tracking-tight text-accent-dark">Syntopy</div>
          <div className="text-xs text-ink-faint">two-channel co-localization</div>
        </div>
        {NAV.filter((n) => !n.roles || n.roles.some((r) => user.roles.includes(r))).map((n) => (
          <NavLink
            key={n.to}
            to={n.to}
            end={n.to === '/'}
            className={({ isActive }) =>
              `rounded-md px-2 py-1.5 text-sm focus-visible:outline-2 focus-visible:outline-offset-1 focus-visible:outline-accent ${isActive ? 'bg-accent-soft text-accent-dark font-medium' : 'text-ink-soft hover:bg-ink/5'}`
            }
          >
            {n.label}
          </NavLink>
        ))}
        <div className="mt-auto px-2 pt-4 text-xs text-ink-faint">
          <div className="font-medium text-ink-soft">{user.name}</div>
          <div>{user.roles.map((r) => r.replace('_', ' ')).join(' · ')}</div>
          <SignOutButton />
          <p className="mt-3 leading-snug">Research use only; not for diagnosis.</p>
        </div>
      </nav>
      <main id="main" tabIndex={-1} className="flex-1 min-w-0 p-6 outline-none">
        <Outlet />
      </main>
    </div>
  );
}
