/** Facility usage as a table: one row per lab and month, with the month's totals over labs. */
import type { UsageRow } from '@shared/schemas/usage';
import { formatNumber } from '@shared/format/number';

const bytes = (n: number) => (n >= 1024 ** 3 ? `${(n / 1024 ** 3).toFixed(2)} GiB` : n >= 1024 ** 2 ? `${(n / 1024 ** 2).toFixed(1)} MiB` : n >= 1024 ? `${(n / 1024).toFixed(1)} KiB` : `${n} B`);
const duration = (s: number) => (s >= 3600 ? `${(s / 3600).toFixed(1)} h` : s >= 60 ? `${(s / 60).toFixed(1)} min` : `${s.toFixed(1)} s`);

export function UsageTable({ rows }: { rows: UsageRow[] }) {
  return (
    <table className="w-full text-sm">
      <thead>
        <tr className="border-b border-ink/10 text-left text-ink-soft">
          {['Month', 'Lab', 'Studies', 'Fields', 'Stored', 'Runs', 'Compute time', 'Active people'].map((h) => (
            <th key={h} scope="col" className="py-1 pr-4 font-medium">
              {h}
            </th>
          ))}
        </tr>
      </thead>
      <tbody>
        {rows.map((r) => (
          <tr key={`${r.labId}-${r.month}`} className="border-b border-ink/5">
            <td className="py-1 pr-4 font-mono text-xs">{r.month}</td>
            <td className="py-1 pr-4">{r.lab}</td>
            <td className="py-1 pr-4 tabular-nums">{r.studies}</td>
            <td className="py-1 pr-4 tabular-nums">{r.fields}</td>
            <td className="py-1 pr-4 tabular-nums">{bytes(r.storedBytes)}</td>
            <td className="py-1 pr-4 tabular-nums">{r.runs}</td>
            <td className="py-1 pr-4 tabular-nums">{duration(r.computeSeconds)}</td>
            <td className="py-1 pr-4 tabular-nums">{formatNumber(r.activeUsers, 'count')}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
