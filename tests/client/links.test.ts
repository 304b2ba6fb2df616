// @vitest-environment jsdom
/**
 * Every in-app link target written in the client (`to=`, `to:` and `navigate(...)`) reaches a page of the
 * app's router rather than "Nothing here", so renaming a client URL cannot leave a link behind. (our check)
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { matchRoutes } from 'react-router';
import { router } from '@/app/router';

const SRC = path.resolve(__dirname, '../../src');

function sourceFiles(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const p = path.join(dir, e.name);
    return e.isDirectory() ? sourceFiles(p) : /\.tsx?$/.test(e.name) ? [p] : [];
  });
}

/** Link targets as written, e.g. "/studies/${s.id}/cell-table" (template parts kept). */
function linkTargets() {
  const out: { file: string; target: string }[] = [];
  const re = /(?:\bto=\{?|\bto: |\bnavigate\()(`|'|")(\/[^`'"]*)\1/g;
  for (const file of sourceFiles(SRC)) {
    for (const m of fs.readFileSync(file, 'utf8').matchAll(re)) out.push({ file: path.relative(SRC, file), target: m[2] });
  }
  return out;
}

/** The concrete path a target stands for: template parts become an id, query and fragment dropped. */
const concrete = (target: string) => target.replace(/\$\{[^}]*\}/g, '1').replace(/[?#].*$/, '');

describe('client links', () => {
  const targets = linkTargets();

  it('finds the links of the source (the scan itself works)', () => {
    const paths = targets.map((t) => t.target);
    expect(paths).toContain('/studies/${studyId}/cell-table');
    expect(paths).toContain('/people');
    expect(targets.length).toBeGreaterThan(30);
  });

  it('every link target matches a page of the router, not the catch-all', () => {
    const broken = targets.filter(({ target }) => {
      const matches = matchRoutes(router.routes, concrete(target));
      return !matches || matches[matches.length - 1].route.path === '*';
    });
    expect(broken).toEqual([]);
  });

  it('the old Cell table URL is gone (no page and no link answers /studies/:id/cells)', () => {
    const m = matchRoutes(router.routes, '/studies/1/cells');
    expect(m?.[m.length - 1].route.path).toBe('*');
    expect(matchRoutes(router.routes, '/studies/1/cell-table')?.at(-1)?.route.path).toBe('studies/:studyId/cell-table');
  });
});
