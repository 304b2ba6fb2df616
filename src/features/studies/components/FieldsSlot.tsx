/**
 * Where a coverslip's fields appear on the study page: the fields feature's list and upload
 * (src/features/fields/components), imported directly.
 */
import { FieldList } from '@/features/fields';
import { UploadFields } from '@/features/fields';

export function FieldsSlot({ coverslipId, studyId, canUpload, defaultInstrumentId = null }: { coverslipId: number; studyId: number; canUpload: boolean; defaultInstrumentId?: number | null }) {
  return (
    <div className="mt-2 flex flex-col gap-2" data-slot="fields">
      <FieldList coverslipId={coverslipId} studyId={studyId} canEdit={canUpload} />
      {canUpload && <UploadFields coverslipId={coverslipId} defaultInstrumentId={defaultInstrumentId} />}
    </div>
  );
}
