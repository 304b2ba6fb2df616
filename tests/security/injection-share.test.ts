/**
 * Injection attempts in the review grid's (Cell table) filter and sort parameters, the CSV column choice and
 * the comparison options: each is a 400 naming the parameter, or (for the free-text name filter) a literal
 * match — never an SQL error, a 500, or rows of another study. Payloads: OWASP WSTG v4.2 WSTG-INPV-05 (SQL
 * injection), SQLite syntax (sqlite.org/lang.html). Then share tokens replayed after revocation (410).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import supertest from 'supertest';
import { makeTestApp, type TestApp } from '../utils/app.js';
import { buildLabA, type LabAEntities } from './world.js';

let t: TestApp;
let e: LabAEntities;
let bio: ReturnType<typeof supertest.agent>;
let total: number;

beforeAll(async () => {
  t = await makeTestApp();
  e = await buildLabA(t);
  bio = await t.login('biologist');
  total = (await bio.get(`/api/studies/${e.studyId}/cell-table`)).body.total;
}, 120_000);
afterAll(() => t?.close());

const SQLI = [
  "pearson; DROP TABLE cells; --",
  "pearson DESC, (SELECT password_hash FROM users)",
  "1 OR 1=1",
  "' OR '1'='1",
  "pearson) UNION SELECT * FROM users --",
  "c.id",
  "(CASE WHEN (SELECT count(*) FROM users)>0 THEN pearson ELSE spearman END)",
  'pearson"',
  "__proto__",
  "constructor",
  "%00",
  "pearson\u0000",
];

/** No database error text and no column name or hash beyond what the request itself sent (errors quote the value received). */
const noSqlLeak = (res: supertest.Response, sent = '') => {
  const s = JSON.stringify(res.body);
  expect(res.status, s).toBeLessThan(500);
  expect(s).not.toMatch(/SQLITE_|syntax error|no such column|near "/i);
  expect(s.split(JSON.stringify(sent).slice(1, -1)).join('')).not.toMatch(/password_hash|\$2[aby]\$/);
};

describe('review grid filter and sort parameters', () => {
  it('sort and dir accept only known keys (400 otherwise)', async () => {
    for (const v of SQLI) {
      for (const p of ['sort', 'dir']) {
        const res = await bio.get(`/api/studies/${e.studyId}/cell-table`).query({ [p]: v });
        noSqlLeak(res, v);
        expect(res.status, `${p}=${v}`).toBe(400);
        expect(res.body.error).toMatch(new RegExp(p));
      }
    }
  });

  it('id lists, ranges, paging, tri-state filters and sources refuse non-values with 400', async () => {
    const bad: Record<string, string[]> = {
      conditionId: ['1 OR 1=1', '1;DROP TABLE cells', "1' --", '-1', '0x10', '1e3'],
      coverslipId: ['1,2) OR (1=1'],
      fieldId: ['(SELECT 1)'],
      range: ['pearson:0:1 OR 1=1', 'pearson;DROP:0:1', 'password_hash:0:1', 'pearson:0:1;', 'pearson:(select 1):1', 'pearson:0'],
      page: ['-1', '1;', 'NaN', '1e99'],
      pageSize: ['0', '100000', '10 OR 1=1'],
      excluded: ['yes OR 1=1', '1'],
      saturated: ["no'"],
      provisional: ['maybe'],
      measured: ['true'],
      runId: ['1 OR 1=1', '-5'],
      recipeId: ['1 UNION SELECT 1'],
    };
    for (const [p, values] of Object.entries(bad))
      for (const v of values) {
        const res = await bio.get(`/api/studies/${e.studyId}/cell-table`).query({ [p]: v });
        noSqlLeak(res, v);
        expect(res.status, `${p}=${v} → ${JSON.stringify(res.body)}`).toBe(400);
      }
  });

  it('a run of another study is not a source (400, no rows of study B)', async () => {
    const res = await bio.get(`/api/studies/${e.studyId}/cell-table`).query({ runId: 999999 });
    expect(res.status).toBe(400);
  });

  it('the free-text cell-name filter is matched literally (LIKE wildcards escaped), never as SQL', async () => {
    for (const v of SQLI.concat(['%', '_', '\\', "%' OR 1=1 --"])) {
      const res = await bio.get(`/api/studies/${e.studyId}/cell-table`).query({ q: v });
      noSqlLeak(res);
      expect(res.status, `q=${v}`).toBe(200);
      expect(res.body.total, `q=${v}`).toBe(0); // no cell name contains these strings
    }
    // sanity: a real substring matches
    const real = await bio.get(`/api/studies/${e.studyId}/cell-table`).query({ q: 'cell' });
    expect(real.body.total).toBe(total);
    expect(total).toBeGreaterThan(0);
  });

  it('CSV column choice and sort refuse unknown names; the tables still exist afterwards', async () => {
    for (const v of SQLI) {
      const a = await bio.get(`/api/studies/${e.studyId}/cells.csv`).query({ columns: `cellId,${v}` });
      noSqlLeak(a);
      expect(a.status).toBe(400);
      const b = await bio.get(`/api/studies/${e.studyId}/cells.csv`).query({ sort: v });
      expect(b.status).toBe(400);
    }
    expect((await bio.get(`/api/studies/${e.studyId}/cell-table`)).body.total).toBe(total);
  });

  it('comparison options refuse injected values', async () => {
    for (const [p, v] of [['coefficient', "pearson'; --"], ['conditionIds', '1 OR 1=1'], ['seed', '1;'], ['resamples', '1e9'], ['bins', '(select 5)'], ['confidence', '0.95 OR 1']]) {
      const res = await bio.get(`/api/studies/${e.studyId}/compare`).query({ [p]: v });
      noSqlLeak(res);
      expect(res.status, `${p}=${v}`).toBe(400);
    }
  });

  it('an exclusion reason with SQL and markup is stored verbatim as data', async () => {
    const reason = "out of focus'); DELETE FROM cells; -- <script>x</script>";
    const res = await bio.post(`/api/cells/${e.cellId}/exclusion`).send({ reason });
    expect(res.status).toBe(200);
    expect(res.body.exclusionReason).toBe(reason);
    expect((await bio.get(`/api/studies/${e.studyId}/cell-table`)).body.total).toBe(total);
    await bio.delete(`/api/cells/${e.cellId}/exclusion`).send({});
  });
});

describe('share tokens replayed after revocation', () => {
  it('the link works, is revoked, and every later replay (page and CSV) answers 410 without logging an opening', async () => {
    const anon = supertest(t.app);
    expect((await anon.get(`/api/shared/${e.shareToken}`)).status).toBe(200);
    expect((await anon.get(`/api/shared/${e.shareToken}/csv/cells`)).status).toBe(200);
    const openings = () => (t.ctx.db.$client.prepare('select count(*) n from share_openings where share_link_id = ?').get(e.shareId) as { n: number }).n;
    const before = openings();
    expect((await bio.post(`/api/shares/${e.shareId}/revoke`).send({})).status).toBe(200);
    for (let i = 0; i < 3; i++) {
      const page = await anon.get(`/api/shared/${e.shareToken}`);
      expect(page.status).toBe(410);
      expect(page.body.error).toMatch(/withdrawn/);
      expect(JSON.stringify(page.body)).not.toMatch(/Security report/);
      expect((await anon.get(`/api/shared/${e.shareToken}/csv/cells`)).status).toBe(410);
    }
    expect(openings()).toBe(before);
    // revoking twice changes nothing, resending a revoked link is refused
    expect((await bio.post(`/api/shares/${e.shareId}/revoke`).send({})).status).toBe(200);
    expect((await bio.post(`/api/shares/${e.shareId}/resend`).send({})).status).toBe(409);
    // a signed-in session does not make a revoked link work either
    expect((await bio.get(`/api/shared/${e.shareToken}`)).status).toBe(410);
  });
});

describe('CSV (formula) injection in downloads', () => {
  // Payloads: OWASP "CSV Injection" page (formula and DDE forms). A safe export starts such text fields with '.
  const PAYLOADS = ['=HYPERLINK("http://evil.example","x")', '+SUM(1,2)', "-1+cmd|' /C calc'!A0", '@SUM(1+1)'];
  const fieldsOf = (csv: string) => csv.split('\r\n').flatMap((line) => line.match(/("([^"]|"")*"|[^,]*)/g) ?? []).map((f) => (f.startsWith('"') ? f.slice(1, -1).replace(/""/g, '"') : f));
  const unsafe = (csv: string) => fieldsOf(csv).filter((f) => /^[=+\-@]/.test(f) && !/^-?\d+(\.\d+)?(e[-+]?\d+)?$/i.test(f));

  it('the Cell table CSV neutralises formulas in cell names and exclusion reasons', async () => {
    const cells = (await bio.get(`/api/studies/${e.studyId}/cell-table`).query({ pageSize: 10 })).body.rows as { cellId: number }[];
    const micro = await t.login('microscopist');
    for (const [i, p] of PAYLOADS.entries()) {
      expect((await micro.patch(`/api/cells/${cells[i].cellId}`).send({ name: p })).status).toBe(200);
      expect((await bio.post(`/api/cells/${cells[i + 4].cellId}/exclusion`).send({ reason: p })).status).toBe(200);
    }
    const csv = (await bio.get(`/api/studies/${e.studyId}/cells.csv`).query({ columns: 'cellId,cell,exclusionReason' })).text;
    for (const p of PAYLOADS) expect(csv).toContain(p.includes(',') || p.includes('"') ? `'${p.replace(/"/g, '""')}` : `'${p}`);
    expect(unsafe(csv)).toEqual([]);
  });

  // Report CSVs use the same writer as the Cell table (server/compare/csv.ts), so the DDE form is neutralised too.
  it('a report CSV neutralises formulas in exclusion reasons (DDE form "-1+cmd|…")', async () => {
    const rep = await bio.post(`/api/studies/${e.studyId}/reports`).send({ title: 'CSV injection report', coefficients: ['pearson'] });
    expect(rep.status).toBe(201);
    const csv = (await bio.get(`/api/reports/${rep.body.id}/csv/exclusions`)).text;
    expect(csv).toContain('HYPERLINK');
    expect(unsafe(csv)).toEqual([]);
  });
});
