import { expect, it } from 'vitest';
import { serverAndBrowser, shot } from './harness.js';

const e2e = serverAndBrowser();

it('serves the built client and the API from one server', async () => {
  const page = await e2e.page();
  await page.goto(e2e.srv.url + '/');
  expect(await page.title()).toBe('Syntopy');
  await page.waitForURL(/\/signin/);
  await shot(page, 'smoke-signin');
  expect(page.errors).toEqual([]);
});
