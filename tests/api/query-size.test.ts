/**
 * Query size of the Cell table and its CSV: hundreds of range filters once built an SQL expression deeper than
 * SQLite allows (1000, https://www.sqlite.org/limits.html) and answered 500. The shared schema caps filters
 * (MAX_RANGE_FILTERS, MAX_IDS_PER_FILTER) and accepts one sort key: too many is a 400 quoting the count.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { MAX_IDS_PER_FILTER, MAX_RANGE_FILTERS } from '../../shared/schemas/cell-table.js';
import { buildLabA, type LabAEntities } from '../security/world.js';

let t: TestApp;
let e: LabAEntities;
let bio: Awaited<ReturnType<TestApp['login']>>;

beforeAll(async () => {
  t = await makeTestApp();
  e = await buildLabA(t);
  bio = await t.login('biologist');
}, 120_000);
afterAll(() => t?.close());

const ranges = (n: number) => Array.from({ length: n }, (_, i) => `range=pearson:${(-1 + i / 1000).toFixed(3)}:1`).join('&');

describe.each(['cell-table', 'cells.csv'])('GET /api/studies/:id/%s', (what) => {
  const url = (q: string) => `/api/studies/${e.studyId}/${what}?${q}`;

  it(`${MAX_RANGE_FILTERS} range filters are answered; 520 are a 400 quoting the count`, async () => {
    const ok = await bio.get(url(ranges(MAX_RANGE_FILTERS)));
    expect(ok.status).toBe(200);
    if (what === 'cell-table') expect(ok.body.total).toBeGreaterThan(0); // -1 … 1 keeps every measured cell
    for (const n of [MAX_RANGE_FILTERS + 1, 520]) {
      const res = await bio.get(url(ranges(n)));
      expect(res.status, String(n)).toBe(400);
      expect(res.body.error).toBe(`range: at most ${MAX_RANGE_FILTERS} range filters, received ${n}`);
    }
  });

  it(`id lists: ${MAX_IDS_PER_FILTER} ids are answered, one more is a 400 quoting the count`, async () => {
    const ids = (n: number) => Array.from({ length: n }, (_, i) => e.fieldId + i).join(',');
    expect((await bio.get(url(`fieldId=${ids(MAX_IDS_PER_FILTER)}`))).status).toBe(200);
    const res = await bio.get(url(`fieldId=${ids(MAX_IDS_PER_FILTER + 1)}`));
    expect(res.status).toBe(400);
    expect(res.body.error).toBe(`fieldId: at most ${MAX_IDS_PER_FILTER} ids per filter, received ${MAX_IDS_PER_FILTER + 1}`);
  });

  it('one sort key: a repeated sort is a 400, not a 500', async () => {
    const res = await bio.get(url('sort=pearson&sort=cell'));
    expect(res.status).toBe(400);
    expect(res.body.error).toMatch(/^sort: /);
  });
});
