/** Builds the client once per browser-test run into a private folder, shared with the tests via provide/inject. */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { TestProject } from 'vitest/node';

export default function setup(project: TestProject) {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'syntopy-e2e-client-'));
  execFileSync(process.execPath, ['node_modules/vite/bin/vite.js', 'build', '--outDir', dir, '--emptyOutDir', '--logLevel', 'warn'], {
    stdio: 'inherit',
  });
  project.provide('clientDir', dir);
  return () => fs.rmSync(dir, { recursive: true, force: true });
}

declare module 'vitest' {
  export interface ProvidedContext {
    clientDir: string;
  }
}
