import type { Comparison } from '@shared/schemas/compare';
/** Where the numbers come from and on which scale they were averaged and tested, in words. */
export function sourceText(data: Comparison): string {
  const s = data.source;
  const recipe = s.recipeName !== null ? `${s.recipeName} v${s.recipeVersion}` : null;
  const from =
    s.runId !== null
      ? `Measurements of run ${s.runId}${recipe ? ` (${recipe})` : ''}`
      : recipe
        ? `Measurements of ${recipe}: the latest per cell among its runs on this study`
        : 'No measurements yet';
  const scale = data.scale === 'fisher_z' ? "; coverslip means are averaged and tested on Fisher's z and shown as r." : '.';
  return from + scale;
}
