import { afterAll, beforeAll, expect, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { launchBrowser, newPage, shot, startServer, type RunningServer } from './harness.js';

let srv: RunningServer;
let browser: Browser;
beforeAll(async () => {
  srv = await startServer();
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
  await srv?.stop();
});

it('serves the built client and the API from one server', async () => {
  const page = await newPage(browser, srv);
  await page.goto(srv.url + '/');
  expect(await page.title()).toBe('Syntopy');
  await page.waitForURL(/\/signin/);
  await shot(page, 'smoke-signin');
  expect(page.errors).toEqual([]);
});
