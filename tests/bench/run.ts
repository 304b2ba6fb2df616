/**
 * `npm run bench`: runs every tests/bench/*.bench.ts file in turn, each in its own `tsx` process (a clean
 * heap and JIT per benchmark), printing their output. Add a benchmark by adding a `<name>.bench.ts` file
 * that does its work when executed directly. Arguments after `--` are passed to every benchmark; a
 * benchmark name filter can be given with BENCH=<substring>.
 */
import { spawnSync } from 'node:child_process';
import { readdirSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
const root = join(here, '..', '..');
const filter = process.env.BENCH ?? '';
const files = readdirSync(here)
  .filter((f) => f.endsWith('.bench.ts') && f.includes(filter))
  .sort();
let failed = 0;
for (const f of files) {
  process.stdout.write(`\n=== ${f} ===\n`);
  const r = spawnSync(process.execPath, ['--import', 'tsx', join(here, f), ...process.argv.slice(2)], { cwd: root, stdio: 'inherit' });
  if (r.status !== 0) {
    failed++;
    process.stdout.write(`(${f} exited with ${r.status ?? r.signal})\n`);
  }
}
process.exitCode = failed ? 1 : 0;
