/**
 * The naming conventions of DEVELOPERS.md ("Layout"), checked over the tree: one vocabulary from route module
 * to schema to feature folder, and one file-naming convention per folder. (our conventions)
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';

const ROOT = path.resolve(__dirname, '../..');

/** Files (relative, with "/") under `dir`, skipping nothing; `dirs` collects the folders met. */
function walk(dir: string, dirs: string[] = []): string[] {
  return fs.readdirSync(path.join(ROOT, dir), { withFileTypes: true }).flatMap((e) => {
    const p = `${dir}/${e.name}`;
    if (e.isDirectory()) {
      dirs.push(p);
      return walk(p, dirs);
    }
    return [p];
  });
}

const KEBAB = /^[a-z0-9]+(-[a-z0-9]+)*$/;
const KEBAB_FILE = /^[a-z0-9]+(-[a-z0-9]+)*(\.[a-z0-9]+)+$/;
const PASCAL_FILE = /^[A-Z][A-Za-z0-9]*\.(tsx|css)$/;
const CAMEL_FILE = /^[a-z][A-Za-z0-9]*(\.worker)?\.tsx?$/;
const base = (f: string) => f.slice(f.lastIndexOf('/') + 1);
const names = (dir: string, ext: string) =>
  fs
    .readdirSync(path.join(ROOT, dir))
    .filter((f) => f.endsWith(ext))
    .map((f) => f.slice(0, -ext.length))
    .sort();

/** The rule a client file follows, by the folder it sits in; null when no rule covers the folder. */
function clientRule(file: string): RegExp | null {
  const dir = file.slice(0, file.lastIndexOf('/'));
  if (file === 'src/components/index.ts' || /^src\/features\/[^/]+\/index\.ts$/.test(file)) return /^index\.ts$/; // public entries
  if (dir === 'src/app/routes' || dir.endsWith('/components')) return PASCAL_FILE;
  if (dir.endsWith('/api') || dir.endsWith('/lib')) return CAMEL_FILE;
  if (dir === 'src/app') return /^([A-Z][A-Za-z0-9]*|[a-z][A-Za-z0-9]*)\.tsx?$/; // Shell, Providers; router
  if (dir === 'src') return /^(main\.tsx|index\.css)$/;
  return null;
}

describe('naming conventions', () => {
  it('folders are kebab-case everywhere (src, server, shared, tests)', () => {
    const dirs: string[] = [];
    for (const top of ['src', 'server', 'shared', 'tests']) walk(top, dirs);
    expect(dirs.length).toBeGreaterThan(30);
    expect(dirs.filter((d) => !KEBAB.test(base(d)))).toEqual([]);
  });

  it('server, shared and test files are kebab-case (reference data in tests/fixtures excepted)', () => {
    const files = ['server', 'shared', 'tests'].flatMap((d) => walk(d)).filter((f) => !/^tests\/fixtures\/[^/]+\//.test(f));
    expect(files).toContain('server/routes/cell-table.ts');
    expect(files.filter((f) => !KEBAB_FILE.test(base(f)))).toEqual([]);
  });

  it('client files follow their folder: components and route modules PascalCase, api and lib camelCase', () => {
    const files = walk('src');
    const wrong = files.filter((f) => {
      const rule = clientRule(f);
      return !rule || !rule.test(base(f));
    });
    expect(files).toContain('src/features/compare/lib/palette.ts');
    expect(wrong).toEqual([]);
  });

  it('a feature folder holds only api/, components/, lib/ and its public entry', () => {
    const stray = fs.readdirSync(path.join(ROOT, 'src/features')).flatMap((f) =>
      fs
        .readdirSync(path.join(ROOT, 'src/features', f))
        .filter((e) => !['api', 'components', 'lib', 'index.ts'].includes(e))
        .map((e) => `src/features/${f}/${e}`),
    );
    expect(stray).toEqual([]);
  });

  it('every route module has the schema module of the same name', () => {
    const routes = names('server/routes', '.ts');
    expect(routes).toEqual(expect.arrayContaining(['cell-table', 'compare', 'people', 'shares']));
    const schemas = names('shared/schemas', '.ts');
    expect(routes.filter((r) => !schemas.includes(r))).toEqual([]);
  });

  it('every feature folder is named like its route module, except the screens that combine several', () => {
    // home (the start page) and workspace (the field workspace: fields, cells, pixels) draw on several resources
    const SCREENS = ['home', 'workspace'];
    const routes = names('server/routes', '.ts');
    const features = fs.readdirSync(path.join(ROOT, 'src/features')).sort();
    expect(features.filter((f) => !SCREENS.includes(f) && !routes.includes(f))).toEqual([]);
  });
});
