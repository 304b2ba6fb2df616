/** The study's default instrument in its header: what new uploads are recorded on; a link to the instrument for those who manage instruments. */
import { Link } from 'react-router';
import type { StudyDetail } from '@shared/schemas/studies';

export function StudyInstrument({ instrument, linked }: { instrument: StudyDetail['defaultInstrument']; linked: boolean }) {
  if (!instrument) return <span data-slot="study-instrument">No default instrument: each upload chooses its own.</span>;
  return (
    <span data-slot="study-instrument">
      Recorded on{' '}
      {linked ? (
        <Link to={`/instruments/${instrument.id}`} className="underline">
          {instrument.name}
        </Link>
      ) : (
        <strong className="font-medium">{instrument.name}</strong>
      )}{' '}
      by default
    </span>
  );
}
