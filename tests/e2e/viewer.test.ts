/**
 * The field viewer as a careful user meets it (issue 19, items 6 and 7), on the seeded demo study:
 *  - the image does not move while outlines are drawn and saved: its position is sampled every frame from
 *    before the first outline until "All changes saved", at three window widths (one where the toolbar only
 *    just wraps, and one where the Cells list sits below the image);
 *  - outlines are drawn from the keyboard alone: the keyboard cursor (arrows, Shift+arrows), Enter places the
 *    corners of a polygon and of a box, Shift+Enter closes, Esc cancels; `?` lists every key.
 * Screenshots: test-results/viewer-*.png. (common practice)
 */
import { expect, it } from 'vitest';
import { serverAndBrowser, shot, signIn, type TrackedPage } from './harness.js';

const e2e = serverAndBrowser();

async function apiGet<T>(page: TrackedPage, path: string): Promise<T> {
  return page.evaluate(async (p) => {
    const r = await fetch(p, { credentials: 'same-origin' });
    if (!r.ok) throw new Error(`${p}: ${r.status}`);
    return r.json();
  }, path);
}

type CellRow = { id: number; name: string; geometry: { kind: string; points?: [number, number][]; x?: number; y?: number; width?: number; height?: number } };

async function openField(page: TrackedPage, index: number) {
  const studies = await apiGet<{ studies: { id: number; isDemo?: boolean }[] }>(page, '/api/studies');
  const study = studies.studies.find((s) => s.isDemo)!;
  const fields = await apiGet<{ fields: { id: number }[] }>(page, `/api/studies/${study.id}/fields`);
  const field = fields.fields[index];
  await page.goto(`${e2e.srv.url}/studies/${study.id}/fields/${field.id}`);
  await page.getByText('Loading image…').waitFor({ state: 'detached', timeout: 30_000 });
  await page.getByTestId('pixel-scatter').waitFor({ timeout: 30_000 });
  await page.getByTestId('cells-list').or(page.getByText('No cells yet.')).first().waitFor();
  return { studyId: study.id, fieldId: field.id };
}

const cursorOf = async (page: TrackedPage) => {
  const c = await page.getByTestId('field-viewer').getAttribute('data-cursor');
  expect(c, 'keyboard cursor shown').toBeTruthy();
  return c!.split(',').map(Number) as [number, number];
};

it('nothing above the image changes height while the first outlines are drawn and saved', async () => {
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  // the hardest width: just below the narrowest window whose toolbar fits on one row, so a shorter or longer save
  // message would re-wrap the toolbar (the old toolbar jumped 24 px there)
  await openField(page, 0);
  const toolbarHeight = async (width: number) => {
    await page.setViewportSize({ width, height: 900 });
    return page.getByRole('toolbar', { name: 'Outline tools' }).evaluate((el) => el.getBoundingClientRect().height);
  };
  const oneRow = await toolbarHeight(1900);
  let edge = 1900;
  while (edge > 700 && (await toolbarHeight(edge - 10)) <= oneRow) edge -= 10;
  while (edge > 700 && (await toolbarHeight(edge - 1)) <= oneRow) edge -= 1;
  for (const width of [1400, edge - 1, 1180]) {
    await page.setViewportSize({ width, height: 900 });
    await openField(page, 0);
    const viewer = page.getByTestId('field-viewer');
    await page.getByText('Outlines save as you draw').waitFor();
    // sample the viewer's top edge on the screen (layout shifts and page scrolls alike) on every frame from now on
    await page.evaluate(() => {
      const el = document.querySelector('[data-testid="field-viewer"]')!;
      const w = window as unknown as { __tops: number[]; __stop: boolean };
      w.__tops = [];
      w.__stop = false;
      const tick = () => {
        w.__tops.push(el.getBoundingClientRect().top);
        if (!w.__stop) requestAnimationFrame(tick);
      };
      tick();
    });
    const before = (await viewer.boundingBox())!;
    const toolbar = page.getByRole('toolbar', { name: 'Outline tools' });
    const toolbarBefore = (await toolbar.boundingBox())!.height;
    await page.keyboard.press('p');
    const cx = before.x + before.width / 2, cy = before.y + before.height / 2;
    for (const [n, [dx, dy]] of [[-40, -30], [30, -40], [45, 25], [-25, 40]].entries()) {
      await page.mouse.click(cx + dx + width / 100, cy + dy);
      if (n === 0) expect((await viewer.boundingBox())!.y).toBe(before.y);
    }
    await page.mouse.click(cx - 40 + width / 100, cy - 30);
    await page.getByText('All changes saved').waitFor({ timeout: 15_000 });
    // a second outline, saved as well
    await page.keyboard.press('b');
    await page.mouse.move(cx + 80, cy + 80);
    await page.mouse.down();
    await page.mouse.move(cx + 120, cy + 110, { steps: 4 });
    await page.mouse.up();
    await expect.poll(() => page.getByTestId('save-status').textContent(), { timeout: 15_000 }).toBe('All changes saved');
    const tops = await page.evaluate(() => {
      const w = window as unknown as { __tops: number[]; __stop: boolean };
      w.__stop = true;
      return w.__tops;
    });
    const after = (await viewer.boundingBox())!;
    expect((await toolbar.boundingBox())!.height, `toolbar height at width ${width}`).toBe(toolbarBefore);
    expect(tops.length).toBeGreaterThan(5);
    expect(Math.max(...tops) - Math.min(...tops), `viewer top moved at width ${width}`).toBe(0);
    expect(after.y).toBe(before.y);
    expect(after.height).toBe(before.height);
    await shot(page, `viewer-01-saved-${width}`);
  }
  expect(page.errors).toEqual([]);
  await page.context().close();
});

it('draws a polygon and a box from the keyboard; Esc cancels; ? lists every key', async () => {
  const page = await e2e.page();
  await signIn(page, e2e.srv, 'microscopist@demo.test');
  const { fieldId } = await openField(page, 1);
  const viewer = page.getByTestId('field-viewer');
  const cellsBefore = (await apiGet<{ cells: CellRow[] }>(page, `/api/fields/${fieldId}/cells`)).cells;

  // the shortcut help
  await page.keyboard.press('?');
  const help = page.getByRole('dialog', { name: 'Keys in the workspace' });
  await help.waitFor();
  const text = await help.innerText();
  for (const k of ['V', 'B', 'E', 'P', 'T', 'M', 'Enter', 'Shift', 'Esc', 'Backspace', 'Delete', 'Ctrl', 'F2', 'Space', '?', '+', '−', '0', '1', '←', '→', '↑', '↓'])
    expect(text, `help lists ${k}`).toContain(k);
  await shot(page, 'viewer-02-keys');
  await page.keyboard.press('Escape');
  await help.waitFor({ state: 'detached' });

  // polygon: arrows show the cursor, Enter places the corners, Shift+Enter closes
  await viewer.focus();
  await page.keyboard.press('p');
  await page.keyboard.press('ArrowRight'); // shows the cursor where it starts
  const placed: [number, number][] = [];
  const corner = async () => {
    placed.push(await cursorOf(page));
    await page.keyboard.press('Enter');
  };
  await corner();
  for (let i = 0; i < 3; i++) await page.keyboard.press('Shift+ArrowRight');
  await corner();
  for (let i = 0; i < 3; i++) await page.keyboard.press('Shift+ArrowDown');
  await corner();
  for (let i = 0; i < 6; i++) await page.keyboard.press('Shift+ArrowLeft');
  await page.keyboard.press('ArrowUp');
  await corner();
  await page.getByText(/4 points · Enter places a point/).waitFor();
  await shot(page, 'viewer-03-keyboard-polygon');
  await page.keyboard.press('Shift+Enter');
  await page.getByText('All changes saved').waitFor({ timeout: 15_000 });
  await expect.poll(async () => (await apiGet<{ cells: CellRow[] }>(page, `/api/fields/${fieldId}/cells`)).cells.length, { timeout: 15_000 }).toBe(cellsBefore.length + 1);
  const afterPolygon = (await apiGet<{ cells: CellRow[] }>(page, `/api/fields/${fieldId}/cells`)).cells;
  const poly = afterPolygon.find((c) => !cellsBefore.some((b) => b.id === c.id))!;
  expect(poly.geometry.kind).toBe('polygon');
  expect(poly.geometry.points).toEqual(placed);
  // the corners moved by whole steps: right, then down, then left past the start
  expect(placed[1][0]).toBeGreaterThan(placed[0][0]);
  expect(placed[2][1]).toBeGreaterThan(placed[1][1]);
  expect(placed[3][0]).toBeLessThan(placed[0][0]);

  // Esc cancels an outline half drawn: nothing is added
  await page.keyboard.press('Enter');
  await page.getByText(/1 point · Enter places a point/).waitFor();
  await page.keyboard.press('Escape');
  await page.getByText(/0 points · Enter places a point/).waitFor();

  // box: Enter on one corner, move, Enter on the opposite corner
  await page.keyboard.press('b');
  await page.keyboard.press('ArrowDown');
  const a = await cursorOf(page);
  await page.keyboard.press('Enter');
  await page.getByText(/Enter places the opposite corner/).waitFor();
  for (let i = 0; i < 2; i++) await page.keyboard.press('Shift+ArrowRight');
  await page.keyboard.press('Shift+ArrowDown');
  const b = await cursorOf(page);
  await page.keyboard.press('Enter');
  await expect.poll(async () => (await apiGet<{ cells: CellRow[] }>(page, `/api/fields/${fieldId}/cells`)).cells.length, { timeout: 15_000 }).toBe(cellsBefore.length + 2);
  const boxCell = (await apiGet<{ cells: CellRow[] }>(page, `/api/fields/${fieldId}/cells`)).cells.find((c) => !afterPolygon.some((p) => p.id === c.id))!;
  expect(boxCell.geometry).toEqual({ kind: 'rect', x: Math.min(a[0], b[0]), y: Math.min(a[1], b[1]), width: Math.abs(b[0] - a[0]), height: Math.abs(b[1] - a[1]) });
  await page.getByText('All changes saved').waitFor({ timeout: 15_000 });
  await shot(page, 'viewer-04-keyboard-box');
  expect(page.errors).toEqual([]);
  await page.context().close();
});
