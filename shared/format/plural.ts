/**
 * Counts shown to people: `plural(1, 'cell')` → "1 cell", `plural(2, 'cell')` → "2 cells",
 * `plural(1200, 'study', 'studies')` → "1,200 studies" (English: singular for exactly one, plural otherwise,
 * including 0). `noun` gives the word alone, for phrases like "runs #2, #3".
 */

export function noun(n: number, singular: string, pluralForm = `${singular}s`): string {
  if (!Number.isFinite(n)) throw new RangeError(`a count must be a finite number, got ${n}`);
  return n === 1 ? singular : pluralForm;
}

export function plural(n: number, singular: string, pluralForm = `${singular}s`): string {
  return `${n.toLocaleString('en-US')} ${noun(n, singular, pluralForm)}`;
}
