/**
 * Outside references for the benchmarks: R energy's distance correlation (Debian r-cran-energy through
 * Rscript) on the same pairs, the data given to R as doubles. `dcor` is the definition's O(n²) form (its
 * distance matrices need 8·n² bytes each, so it is run only where that fits); `dcor2d` is energy's
 * O(n log n) form for two univariate samples (Huo & Székely 2016). CPU time of the R process
 * (system.time: user + system), the best of `repeats`, and the value, or null when R or energy is absent or
 * the run fails or exceeds `timeoutMs`.
 */
import { spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';

export interface EnergyTiming {
  cpu: number;
  value: number;
}

let energyMissing: string | null = null;

export function energyDcor(x: Uint16Array, y: Uint16Array, dir: string, fn: 'dcor' | 'dcor2d', repeats = 1, timeoutMs = 120_000): EnergyTiming | null {
  if (energyMissing !== null) return null;
  const fx = join(dir, 'energy.x.bin'), fy = join(dir, 'energy.y.bin');
  writeFileSync(fx, x);
  writeFileSync(fy, y);
  const script = `
suppressPackageStartupMessages(library(energy))
a <- commandArgs(TRUE); n <- as.integer(a[3])
x <- as.double(readBin(a[1], "integer", n = n, size = 2, signed = FALSE, endian = "little"))
y <- as.double(readBin(a[2], "integer", n = n, size = 2, signed = FALSE, endian = "little"))
best <- Inf; v <- NA
for (k in seq_len(as.integer(a[4]))) {
  t <- system.time(v <- ${fn === 'dcor' ? 'dcor(x, y)' : 'dcor2d(x, y, type = "V")'})
  best <- min(best, t[["user.self"]] + t[["sys.self"]])
}
cat(sprintf("%.6f %.17g\\n", best * 1000, ${fn === 'dcor' ? 'v' : 'sqrt(max(v, 0))'}))
`;
  const r = spawnSync('Rscript', ['-e', script, fx, fy, String(x.length), String(repeats)], { encoding: 'utf8', timeout: timeoutMs });
  if (r.error && (r.error as NodeJS.ErrnoException).code === 'ENOENT') {
    energyMissing = 'Rscript is not installed';
    return null;
  }
  if (r.status !== 0) {
    if (/there is no package called/.test(r.stderr ?? '')) energyMissing = 'the R package energy is not installed';
    return null;
  }
  const [cpu, value] = r.stdout.trim().split(/\s+/).map(Number);
  return Number.isFinite(cpu) ? { cpu, value } : null;
}

/** why energyDcor gave null for every call (R or the package missing), else null */
export const energyAbsent = () => energyMissing;
