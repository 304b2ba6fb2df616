/** The studies the user can see, as a table a keyboard can walk through (each name is a link). */
import { Link } from 'react-router';
import type { StudySummary } from '@shared/schemas/studies';
import { Badge } from '@/components/Badge';
import { focusRing } from '@/lib/cx';

export function StudyList({ studies, caption = 'Studies' }: { studies: StudySummary[]; caption?: string }) {
  return (
    <div className="overflow-x-auto rounded-lg border border-ink/10 bg-white">
      <table className="w-full text-left text-sm">
        <caption className="sr-only">{caption}</caption>
        <thead className="border-b border-ink/10 text-sm text-ink-soft">
          <tr>
            <th scope="col" className="px-4 py-2 font-medium">Study</th>
            <th scope="col" className="px-4 py-2 font-medium">Lab</th>
            <th scope="col" className="px-4 py-2 font-medium">Owner</th>
            <th scope="col" className="px-4 py-2 text-right font-medium">Conditions</th>
            <th scope="col" className="px-4 py-2 text-right font-medium">Coverslips</th>
            <th scope="col" className="px-4 py-2 text-right font-medium">Fields</th>
          </tr>
        </thead>
        <tbody>
          {studies.map((s) => (
            <tr key={s.id} className="border-b border-ink/5 last:border-0 hover:bg-paper/70">
              <td className="px-4 py-2.5">
                <Link to={`/studies/${s.id}`} className={`rounded font-medium text-accent-dark hover:underline ${focusRing}`}>
                  {s.name}
                </Link>
                {s.isDemo && (
                  <Badge tone="warn" className="ml-2">
                    invented demo
                  </Badge>
                )}
                {s.description && <div className="mt-0.5 line-clamp-1 text-xs text-ink-soft">{s.description}</div>}
              </td>
              <td className="px-4 py-2.5 text-ink-soft">{s.labName}</td>
              <td className="px-4 py-2.5 text-ink-soft">{s.ownerName}</td>
              <td className="px-4 py-2.5 text-right tabular-nums">{s.conditionCount}</td>
              <td className="px-4 py-2.5 text-right tabular-nums">{s.coverslipCount}</td>
              <td className="px-4 py-2.5 text-right tabular-nums">{s.fieldCount}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
