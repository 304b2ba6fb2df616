/** Small invented study shapes for client tests (parsed with the shared schema so they stay in step). */
import { StudyDetail, type StudyAction } from '@shared/schemas/studies';

export function makeStudy(permissions: StudyAction[] = ['read', 'edit_structure', 'add_coverslips', 'edit_images', 'run', 'exclude', 'report', 'delete']): StudyDetail {
  const cs = (id: number, conditionId: number, replicate: number, fieldCount = 0, cellCount = 0) => ({
    id,
    conditionId,
    name: `Coverslip ${replicate}`,
    replicate,
    preparedOn: null,
    notes: '',
    position: replicate - 1,
    fieldCount,
    cellCount,
  });
  return StudyDetail.parse({
    id: 3,
    name: 'Puncta sharing',
    description: 'Invented test study',
    labId: 1,
    labName: 'Test lab',
    ownerId: 7,
    ownerName: 'Ada Demo',
    isDemo: false,
    createdAt: '2026-12-01T00:00:00.000Z',
    conditionCount: 2,
    coverslipCount: 3,
    fieldCount: 2,
    defaultInstrument: null,
    permissions,
    conditions: [
      { id: 10, studyId: 3, name: 'Control', position: 0, coverslips: [cs(100, 10, 1, 2, 0), cs(101, 10, 2)] },
      { id: 11, studyId: 3, name: 'Treated', position: 1, coverslips: [cs(110, 11, 1)] },
    ],
  });
}
