/** Which instrument recorded the field, chosen on the field itself; saved as soon as it is chosen. */
import { ErrorNotice } from '@/components';
import { InstrumentPicker } from '@/features/instruments';
import { useSetFieldInstrument } from '../api/useSetFieldInstrument';

export function FieldInstrument({ fieldId, instrumentId }: { fieldId: number; instrumentId: number | null }) {
  const set = useSetFieldInstrument(fieldId);
  return (
    <div className="flex flex-col gap-1">
      <InstrumentPicker label="Recorded on" value={set.isPending ? (set.variables ?? null) : instrumentId} onChange={(id) => set.mutate(id)} disabled={set.isPending} />
      <ErrorNotice error={set.error} />
    </div>
  );
}
