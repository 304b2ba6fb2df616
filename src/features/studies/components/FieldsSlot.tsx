/**
 * Where a coverslip's fields appear. The upload component and field list belong to the fields feature
 * (src/features/fields/components/UploadFields.tsx → `UploadFields`, FieldList.tsx → `FieldList`, each
 * taking `coverslipId`); they are picked up here when present, so this page builds before they exist.
 */
import { Component as ReactComponent, lazy, Suspense, type ComponentType } from 'react';
import { Spinner } from '@/components/Spinner';

type SlotProps = { coverslipId: number; studyId?: number; canEdit?: boolean };

const modules = import.meta.glob('../../fields/components/*.tsx');

function pick(file: string, exportName: string): ComponentType<SlotProps> | null {
  const key = Object.keys(modules).find((k) => k.endsWith(`/${file}`));
  if (!key) return null;
  return lazy(async () => {
    const mod = (await modules[key]()) as Record<string, ComponentType<SlotProps>>;
    const C = mod[exportName] ?? mod.default;
    if (!C) throw new Error(`${file} does not export ${exportName}`);
    return { default: C };
  });
}

const UploadFields = pick('UploadFields.tsx', 'UploadFields');
const FieldList = pick('FieldList.tsx', 'FieldList');

export const fieldsFeaturePresent = { upload: !!UploadFields, list: !!FieldList };

class SlotBoundary extends ReactComponent<{ children: React.ReactNode; what: string }, { failed: string | null }> {
  state = { failed: null as string | null };
  static getDerivedStateFromError(e: unknown) {
    return { failed: e instanceof Error ? e.message : String(e) };
  }
  render() {
    if (this.state.failed) return <p className="text-xs text-danger">The {this.props.what} could not be shown: {this.state.failed}</p>;
    return this.props.children;
  }
}

export function FieldsSlot({ coverslipId, studyId, canUpload, fieldCount }: { coverslipId: number; studyId: number; canUpload: boolean; fieldCount: number }) {
  return (
    <div className="mt-2 flex flex-col gap-2" data-slot="fields">
      {FieldList ? (
        <SlotBoundary what="field list">
          <Suspense fallback={<Spinner size="sm" label="Loading fields…" />}>
            <FieldList coverslipId={coverslipId} studyId={studyId} canEdit={canUpload} />
          </Suspense>
        </SlotBoundary>
      ) : (
        <p className="rounded border border-dashed border-ink/20 px-3 py-2 text-xs text-ink-soft">
          [Field list goes here] {fieldCount === 1 ? '1 field' : `${fieldCount} fields`} on this coverslip.
        </p>
      )}
      {canUpload &&
        (UploadFields ? (
          <SlotBoundary what="upload">
            <Suspense fallback={<Spinner size="sm" label="" />}>
              <UploadFields coverslipId={coverslipId} />
            </Suspense>
          </SlotBoundary>
        ) : (
          <p className="rounded border border-dashed border-ink/20 px-3 py-2 text-xs text-ink-soft">[Upload of fields goes here]</p>
        ))}
    </div>
  );
}
