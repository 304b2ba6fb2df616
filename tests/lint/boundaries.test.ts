/**
 * The import boundaries of eslint.config.js fire (and stay quiet on allowed imports): each case lints a small
 * source text as if it were a file at the given path, through ESLint's Node API and the project's config.
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { beforeAll, describe, expect, it } from 'vitest';
import { ESLint } from '../../tools/lint/index.js';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
let eslint: InstanceType<typeof ESLint>;
beforeAll(() => {
  eslint = new ESLint({ cwd: ROOT });
});

async function problems(file: string, code: string) {
  const [r] = await eslint.lintText(code, { filePath: path.join(ROOT, file) });
  return r.messages.map((m) => ({ rule: m.ruleId, message: m.message }));
}
const boundary = (ps: { rule: string | null; message: string }[]) => ps.filter((p) => p.rule === 'syntopy/boundaries').map((p) => p.message);

describe('import boundaries', () => {
  it('shared/ may not import server/ or src/ (relative paths and the @/ alias)', async () => {
    const ps = await problems(
      'shared/analysis/probe.ts',
      [
        "import { schema } from '../../server/db/client.js';",
        "import type { AppContext } from '../../server/context.js';",
        "export { api } from '@/lib/api';",
        "export const later = () => import('../../src/lib/api');",
        "export type T = import('../../server/env.js').Env;",
        "export { schema };",
        "export type { AppContext };",
      ].join('\n'),
    );
    expect(boundary(ps)).toEqual([
      'shared/ must not import server/ ("../../server/db/client.js"): shared code runs in the browser and the server alike',
      'shared/ must not import server/ ("../../server/context.js"): shared code runs in the browser and the server alike',
      'shared/ must not import src/ ("@/lib/api"): shared code runs in the browser and the server alike',
      'shared/ must not import src/ ("../../src/lib/api"): shared code runs in the browser and the server alike',
      'shared/ must not import server/ ("../../server/env.js"): shared code runs in the browser and the server alike',
    ]);
  });

  it('shared/ importing shared/ and packages is fine', async () => {
    const ps = await problems('shared/stats/probe.ts', "import { z } from 'zod';\nimport { pearson } from '../analysis/pearson.js';\nexport const x = [z, pearson];\n");
    expect(ps).toEqual([]);
  });

  it('server/ may not import the client', async () => {
    const ps = await problems('server/routes/probe.ts', "import { api } from '../../src/lib/api';\nimport { Fisher } from '../../shared/stats/index.js';\nexport const x = [api, Fisher];\n");
    expect(boundary(ps)).toEqual(['server/ must not import the client ("../../src/lib/api")']);
  });

  it('a feature reaches another feature only through its entry; its own files freely', async () => {
    const ps = await problems(
      'src/features/runs/components/Probe.tsx',
      [
        "import { RecipeStatusBadge } from '@/features/recipes/components/RecipeStatusBadge';",
        "import { useRecipes } from '../../recipes/api/useRecipes';",
        "import { useStudy } from '@/features/studies';",
        "import { useOutbox } from '../../outbox/index';",
        "import { RunList } from './RunList';",
        "import { useRuns } from '../api/useRuns';",
        'export const x = [RecipeStatusBadge, useRecipes, useStudy, useOutbox, RunList, useRuns];',
      ].join('\n'),
    );
    expect(boundary(ps)).toEqual([
      'import feature "recipes" through its entry src/features/recipes/index.ts, not "@/features/recipes/components/RecipeStatusBadge"',
      'import feature "recipes" through its entry src/features/recipes/index.ts, not "../../recipes/api/useRecipes"',
    ]);
  });

  it('route modules in src/app import features through their entries too', async () => {
    const ps = await problems('src/app/routes/Probe.tsx', "import { useMe } from '@/features/auth/api/useMe';\nimport { SignInForm } from '@/features/auth';\nexport const x = [useMe, SignInForm];\n");
    expect(boundary(ps)).toEqual(['import feature "auth" through its entry src/features/auth/index.ts, not "@/features/auth/api/useMe"']);
  });

  it('an eslint-disable comment that disables nothing is an error', async () => {
    const ps = await problems('shared/analysis/probe.ts', '// eslint-disable-next-line @typescript-eslint/no-explicit-any\nexport const one = 1;\n');
    expect(ps).toHaveLength(1);
    expect(ps[0].message).toMatch(/Unused eslint-disable directive/);
  });
});
