/** Routes compose features; each route module is loaded lazily (src/app/routes/<Name>.tsx exports `Component`). */
import { createBrowserRouter } from 'react-router';
import { Shell } from './Shell';

const lazy = (load: () => Promise<{ Component: React.ComponentType }>) => async () => ({ Component: (await load()).Component });
/** Shown while the first page's module loads (keeps React Router from warning on every fresh page load). */
const HydrateFallback = () => <div className="p-8 text-ink-soft">Loading…</div>;

export const router = createBrowserRouter([
  { path: '/signin', HydrateFallback, lazy: lazy(() => import('./routes/SignIn')) },
  { path: '/invite/:token', HydrateFallback, lazy: lazy(() => import('./routes/AcceptInvite')) },
  { path: '/shared/:token', HydrateFallback, lazy: lazy(() => import('./routes/SharedReport')) },
  {
    path: '/',
    Component: Shell,
    HydrateFallback,
    children: [
      { index: true, lazy: lazy(() => import('./routes/Home')) },
      { path: 'studies', lazy: lazy(() => import('./routes/Studies')) },
      { path: 'studies/:studyId', lazy: lazy(() => import('./routes/Study')) },
      { path: 'studies/:studyId/fields/:fieldId', lazy: lazy(() => import('./routes/FieldWorkspace')) },
      { path: 'studies/:studyId/cell-table', lazy: lazy(() => import('./routes/CellTable')) },
      { path: 'studies/:studyId/compare', lazy: lazy(() => import('./routes/Compare')) },
      { path: 'studies/:studyId/reports', lazy: lazy(() => import('./routes/Reports')) },
      { path: 'reports/:reportId', lazy: lazy(() => import('./routes/Report')) },
      { path: 'recipes', lazy: lazy(() => import('./routes/Recipes')) },
      { path: 'recipes/:recipeId', lazy: lazy(() => import('./routes/RecipeEditor')) },
      { path: 'review', lazy: lazy(() => import('./routes/ReviewQueue')) },
      { path: 'runs', lazy: lazy(() => import('./routes/Runs')) },
      { path: 'account', lazy: lazy(() => import('./routes/Account')) },
      { path: 'people', lazy: lazy(() => import('./routes/People')) },
      { path: 'outbox', lazy: lazy(() => import('./routes/Outbox')) },
      { path: 'usage', lazy: lazy(() => import('./routes/Usage')) },
      { path: 'instruments', lazy: lazy(() => import('./routes/Instruments')) },
      { path: 'instruments/:instrumentId', lazy: lazy(() => import('./routes/Instrument')) },
      { path: 'api-reference', lazy: lazy(() => import('./routes/ApiReference')) },
      { path: '*', lazy: lazy(() => import('./routes/NotFound')) },
    ],
  },
]);
