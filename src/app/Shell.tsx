/**
 * The signed-in frame: a left rail with the user's places, and the page. Redirects to sign-in when signed out.
 * Below 768 px wide (e.g. 200 % zoom) the rail folds into a "Menu" button above the page. After sign-in and
 * after every move to another page, focus goes to the page's main heading (when nothing inside the page has it).
 */
import { useEffect, useState } from 'react';
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
  { to: '/instruments', label: 'Instruments', roles: ['facility_manager'] },
  { to: '/account', label: 'Account' },
  { to: '/api-reference', label: 'API reference' },
];

/** Focuses the main heading of the page at `path` once it has rendered (routes load lazily), unless focus is already inside the page. */
function useFocusMainHeading(path: string, ready: boolean) {
  useEffect(() => {
    if (!ready) return;
    const main = document.getElementById('main');
    if (!main) return;
    const tryFocus = () => {
      const active = document.activeElement;
      if (active && active !== document.body && main.contains(active)) return true;
      const h1 = main.querySelector<HTMLElement>('h1');
      if (!h1) return false;
      if (!h1.hasAttribute('tabindex')) h1.setAttribute('tabindex', '-1');
      h1.focus({ preventScroll: true });
      return true;
    };
    if (tryFocus()) return;
    const mo = new MutationObserver(() => tryFocus() && stop());
    const t = setTimeout(() => stop(), 10_000);
    const stop = () => {
      mo.disconnect();
      clearTimeout(t);
    };
    mo.observe(main, { childList: true, subtree: true });
    return stop;
  }, [path, ready]);
}

export function Shell() {
  const me = useMe();
  const loc = useLocation();
  const [menuOpen, setMenuOpen] = useState(false);
  useFocusMainHeading(loc.pathname, !!me.data);
  // a chosen place closes the folded menu
  useEffect(() => setMenuOpen(false), [loc.pathname]);
  if (me.isPending) return <div className="p-8 text-ink-soft">Loading…</div>;
  if (me.isError) return <div className="p-8 text-danger">The server could not be reached: {String(me.error.message)}</div>;
  if (!me.data) return <Navigate to={`/signin?next=${encodeURIComponent(loc.pathname + loc.search)}`} replace />;
  const user = me.data;
  return (
    <div className="min-h-screen md:flex">
      <a href="#main" className="sr-only focus:not-sr-only focus:absolute focus:left-2 focus:top-2 focus:z-50 focus:rounded focus:bg-white focus:px-3 focus:py-2">
        Skip to the page
      </a>
      <div className="no-print flex items-center justify-between border-b border-ink/10 bg-white/60 px-4 py-2 md:hidden">
        <span className="text-lg font-bold tracking-tight text-accent-dark">Syntopy</span>
        <button
          type="button"
          className="rounded-md border border-ink/15 bg-white px-3 py-1 text-sm focus-visible:outline-2 focus-visible:outline-accent"
          aria-expanded={menuOpen}
          aria-controls="main-nav"
          onClick={() => setMenuOpen((o) => !o)}
        >
          Menu
        </button>
      </div>
      <nav
        id="main-nav"
        className={`no-print shrink-0 flex-col gap-1 border-ink/10 bg-white/60 px-3 py-4 md:flex md:w-52 md:border-r ${menuOpen ? 'flex border-b' : 'hidden'}`}
        aria-label="Main"
      >
        <div className="hidden px-2 pb-4 md:block">
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
        <div className="px-2 pt-4 text-xs text-ink-faint md:mt-auto">
          <div className="font-medium text-ink-soft">{user.name}</div>
          <div>{user.roles.map((r) => r.replace('_', ' ')).join(' · ')}</div>
          <SignOutButton />
          <p className="mt-3 leading-snug">Research use only; not for diagnosis.</p>
        </div>
      </nav>
      <main id="main" tabIndex={-1} className="min-w-0 flex-1 p-4 outline-none sm:p-6">
        <Outlet />
      </main>
    </div>
  );
}
