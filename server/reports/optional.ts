/**
 * Modules written by other helpers in parallel (comparison, pixel loading, previews) are loaded lazily, so a
 * report can still be made while one is missing or failing: the part that needs it is left out (null) and
 * the snapshot says so. Loaded once per process.
 */
const cache = new Map<string, Promise<Record<string, unknown> | null>>();

export function optionalModule(which: 'compare' | 'intake' | 'preview'): Promise<Record<string, unknown> | null> {
  let p = cache.get(which);
  if (!p) {
    const load =
      which === 'compare'
        ? // @ts-ignore: written by the comparison work (issue 7); may not exist yet
          () => import('../compare/compute.js')
        : which === 'intake'
          ? // @ts-ignore: written by the intake work (issue 4); may not exist yet
            () => import('../images/intake.js')
          : // @ts-ignore: written by the intake work (issue 4); may not exist yet
            () => import('../images/preview.js');
    p = load()
      .then((m: unknown) => m as Record<string, unknown>)
      .catch(() => null);
    // a missing module is retried on the next report (it may land while the server runs in dev)
    p.then((m) => {
      if (!m) cache.delete(which);
    });
    cache.set(which, p);
  }
  return p;
}
