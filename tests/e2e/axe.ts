/**
 * The axe-core pass shared by the browser tests: serious and critical violations (axe-core's own impact
 * ratings) plus the structure rules held as well (ALSO_HELD).
 */
import { createRequire } from 'node:module';
import fs from 'node:fs';
import type { TrackedPage } from './harness.js';

const axeSource = fs.readFileSync(createRequire(import.meta.url).resolve('axe-core/axe.min.js'), 'utf8');

export interface Found {
  id: string;
  impact: string | null;
  help: string;
  nodes: string[];
}

/** structure rules the issue named, which axe rates moderate or minor; held here too */
export const ALSO_HELD = new Set(['region', 'landmark-one-main', 'heading-order', 'empty-table-header', 'page-has-heading-one', 'landmark-unique']);

/** runs axe on the page as it is; returns its serious and critical violations and those of ALSO_HELD */
export async function scan(page: TrackedPage): Promise<Found[]> {
  // evaluated through the browser's debugging protocol, so the page's own script policy does not apply
  if (!(await page.evaluate('typeof window.axe !== "undefined"'))) await page.evaluate(axeSource);
  const result = (await page.evaluate(async () => {
    const axe = (window as any).axe;
    const r = await axe.run(document, { resultTypes: ['violations'] });
    return r.violations.map((v: any) => ({
      id: v.id,
      impact: v.impact,
      help: v.help,
      nodes: v.nodes.slice(0, 6).map((n: any) => `${n.target.join(' ')} — ${(n.failureSummary ?? '').split('\n').slice(1).join(' ').slice(0, 160)}`),
    }));
  })) as Found[];
  return result.filter((v) => v.impact === 'serious' || v.impact === 'critical' || ALSO_HELD.has(v.id));
}

