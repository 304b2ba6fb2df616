/**
 * ESLint for Syntopy (`npm run lint`, part of `npm test`). ESLint and typescript-eslint live in tools/lint
 * (their own install: typescript-eslint needs the TypeScript 5 compiler API; the project type-checks with
 * TypeScript 7). Rules kept to what matters: the import boundaries below, typescript-eslint's recommended
 * rules, and no `eslint-disable` comment that disables nothing.
 *
 * Boundaries (DEVELOPERS.md "Layout"):
 *   - shared/ imports neither server/ nor src/;
 *   - server/ never imports src/;
 *   - code in src/ outside a feature src/features/<f>/ imports that feature only through its public entry
 *     src/features/<f>/index.ts (other features and the route modules in src/app alike).
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { reactHooks, tseslint } from './tools/lint/index.js';

const ROOT = path.dirname(fileURLToPath(import.meta.url));
const FEATURES = path.join(ROOT, 'src', 'features');

/** Absolute path an import specifier points at, or null for a package. */
function targetOf(spec, file) {
  if (spec.startsWith('.')) return path.resolve(path.dirname(file), spec);
  if (spec.startsWith('@/')) return path.join(ROOT, 'src', spec.slice(2));
  if (spec.startsWith('@shared/')) return path.join(ROOT, 'shared', spec.slice(8));
  return null;
}

const topOf = (abs) => path.relative(ROOT, abs).split(path.sep)[0];
const featureOf = (abs) => {
  const rel = path.relative(FEATURES, abs);
  return rel.startsWith('..') || path.isAbsolute(rel) || rel === '' ? null : rel.split(path.sep)[0];
};
const isEntry = (abs, feature) => {
  const rel = path.relative(path.join(FEATURES, feature), abs).replace(/\.(js|ts|tsx)$/, '');
  return rel === '' || rel === 'index';
};

const boundaries = {
  meta: {
    type: 'problem',
    docs: { description: 'keeps shared/, server/ and src/ and the client features apart' },
    schema: [],
    messages: {
      sharedImports: 'shared/ must not import {{top}}/ ("{{spec}}"): shared code runs in the browser and the server alike',
      serverImportsClient: 'server/ must not import the client ("{{spec}}")',
      featureInternals: 'import feature "{{feature}}" through its entry src/features/{{feature}}/index.ts, not "{{spec}}"',
    },
  },
  create(context) {
    const file = context.filename;
    const fromTop = topOf(file);
    const fromFeature = featureOf(file);
    const check = (node, spec) => {
      if (typeof spec !== 'string') return;
      const target = targetOf(spec, file);
      if (!target) return;
      const top = topOf(target);
      if (fromTop === 'shared' && (top === 'server' || top === 'src')) {
        context.report({ node, messageId: 'sharedImports', data: { top, spec } });
      } else if (fromTop === 'server' && top === 'src') {
        context.report({ node, messageId: 'serverImportsClient', data: { spec } });
      } else if (fromTop === 'src') {
        const feature = featureOf(target);
        if (feature && feature !== fromFeature && !isEntry(target, feature)) {
          context.report({ node, messageId: 'featureInternals', data: { feature, spec } });
        }
      }
    };
    const fromSource = (node) => node.source && check(node.source, node.source.value);
    // import('…') expressions and `import('…').T` types as well as import/export declarations
    return {
      ImportDeclaration: fromSource,
      ExportNamedDeclaration: fromSource,
      ExportAllDeclaration: fromSource,
      ImportExpression: (node) => node.source.type === 'Literal' && check(node.source, node.source.value),
      TSImportType: (node) => node.source?.type === 'Literal' && check(node.source, node.source.value),
    };
  },
};

export default tseslint.config(
  {
    ignores: ['node_modules/', 'tools/lint/node_modules/', 'dist/', 'data/', 'coverage/', 'test-results/', 'drizzle/', 'public/', '**/*.tmp.ts', '**/*.tmp.mts'],
  },
  {
    linterOptions: { reportUnusedDisableDirectives: 'error' },
  },
  {
    files: ['**/*.{ts,tsx,mts,cts}'],
    extends: [tseslint.configs.recommended],
    plugins: { syntopy: { rules: { boundaries } } },
    rules: {
      'syntopy/boundaries': 'error',
      // comma-sequenced assignments (`if (c) (a = 1), (b = 2);`) are the engine's compact style; tsc already
      // rejects a comma operand without side effects (TS2695)
      '@typescript-eslint/no-unused-expressions': 'off',
      // an underscore marks a binding kept on purpose (dropping fields by rest destructuring, Express's 4-argument error handler)
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrorsIgnorePattern: '^_', ignoreRestSiblings: true }],
      // style, not bugs: `any` sits at untyped library seams and test JSON; strict tsc checks the rest
      '@typescript-eslint/no-explicit-any': 'off',
      'prefer-const': 'off',
    },
  },
  {
    // the two hook rules that catch real bugs (conditional hooks, stale closures); not the compiler-era set
    files: ['src/**/*.{ts,tsx}', 'tests/client/**/*.{ts,tsx}'],
    plugins: { 'react-hooks': reactHooks },
    rules: {
      'react-hooks/rules-of-hooks': 'error',
      'react-hooks/exhaustive-deps': 'error',
    },
  },
);
