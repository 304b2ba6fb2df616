/** Every instrument with its channel pair and the calibration runs apply; each row opens the instrument. */
import { Link } from 'react-router';
import { EmptyState, ErrorNotice, Loading, cx, focusRing } from '@/components';
import { useInstruments } from '../api/useInstruments';

export function InstrumentList() {
  const q = useInstruments();
  if (q.isPending) return <Loading />;
  if (q.isError) return <ErrorNotice error={q.error} />;
  if (!q.data.length)
    return <EmptyState title="No instruments yet">Record a microscope with its objective and channel pair; then give it a calibration and approve it.</EmptyState>;
  return (
    <table className="w-full text-left text-sm">
      <thead className="text-ink-soft">
        <tr>
          <th scope="col" className="py-2 pr-4 font-medium">Instrument</th>
          <th scope="col" className="py-2 pr-4 font-medium">Objective</th>
          <th scope="col" className="py-2 pr-4 font-medium">Channels</th>
          <th scope="col" className="py-2 pr-4 font-medium">Approved calibration</th>
        </tr>
      </thead>
      <tbody>
        {q.data.map((i) => (
          <tr key={i.id} className="border-t border-ink/10">
            <td className="py-2 pr-4">
              <Link to={`/instruments/${i.id}`} className={cx('font-medium text-accent-dark hover:underline', focusRing)}>
                {i.name}
              </Link>
            </td>
            <td className="py-2 pr-4">{i.objective || '—'}</td>
            <td className="py-2 pr-4">
              <span className="ch1-ink">{i.channel1}</span> and <span className="ch2-ink">{i.channel2}</span>
            </td>
            <td className="py-2 pr-4">{i.approved ? <span className="font-mono">v{i.approved.version}</span> : <span className="text-ink-soft">none yet</span>}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
