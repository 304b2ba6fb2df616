/**
 * Studies → conditions → coverslips: request and response shapes shared by server (server/routes/studies.ts)
 * and client (src/features/studies).
 *
 * Routes (all under /api, session cookie required):
 *   GET    /studies                         → StudyListResponse (studies the user may see)
 *   POST   /studies                         CreateStudyRequest → StudyDetail (201; biologists)
 *   GET    /studies/:studyId                → StudyDetail
 *   PATCH  /studies/:studyId                UpdateStudyRequest → StudyDetail
 *   DELETE /studies/:studyId                DeleteStudyRequest → OkResponse (owner; body must repeat the name)
 *   POST   /studies/:studyId/conditions     CreateConditionRequest → StudyDetail (201)
 *   PATCH  /conditions/:id                  UpdateConditionRequest → StudyDetail
 *   DELETE /conditions/:id                  → StudyDetail
 *   POST   /conditions/:id/coverslips       CreateCoverslipRequest → StudyDetail (201)
 *   PATCH  /coverslips/:id                  UpdateCoverslipRequest → StudyDetail
 *   DELETE /coverslips/:id                  → StudyDetail
 *   POST   /studies/:studyId/reorder        ReorderRequest → StudyDetail
 * Writes answer with the whole updated StudyDetail so the client can replace its cached copy.
 * 404 when the study is not visible to the user, 403 when visible but the action is not allowed.
 */
import { z } from 'zod';
import { Id, IsoDate, Name } from './common.js';

export const StudyAction = z.enum(['read', 'edit_structure', 'add_coverslips', 'edit_images', 'run', 'exclude', 'report', 'delete']);
export type StudyAction = z.infer<typeof StudyAction>;

export const StudySummary = z.object({
  id: Id,
  name: z.string(),
  description: z.string(),
  labId: Id,
  labName: z.string(),
  ownerId: Id,
  ownerName: z.string(),
  isDemo: z.boolean(),
  createdAt: IsoDate,
  conditionCount: z.number().int(),
  coverslipCount: z.number().int(),
  fieldCount: z.number().int(),
  /** the instrument new uploads are recorded on unless the upload names another, or null */
  defaultInstrument: z.object({ id: Id, name: z.string() }).nullable(),
  /** what the signed-in user may do here (the client hides buttons; the server still checks) */
  permissions: z.array(StudyAction),
});
export type StudySummary = z.infer<typeof StudySummary>;
export const StudyListResponse = z.object({ studies: z.array(StudySummary) });
export type StudyListResponse = z.infer<typeof StudyListResponse>;

export const Coverslip = z.object({
  id: Id,
  conditionId: Id,
  name: z.string(),
  replicate: z.number().int(),
  preparedOn: z.string().nullable(),
  notes: z.string(),
  position: z.number().int(),
  fieldCount: z.number().int(),
  cellCount: z.number().int(),
});
export type Coverslip = z.infer<typeof Coverslip>;

export const Condition = z.object({
  id: Id,
  studyId: Id,
  name: z.string(),
  position: z.number().int(),
  coverslips: z.array(Coverslip),
});
export type Condition = z.infer<typeof Condition>;

export const StudyDetail = StudySummary.extend({ conditions: z.array(Condition) });
export type StudyDetail = z.infer<typeof StudyDetail>;

const Description = z.string().trim().max(4000, 'a description has at most 4000 characters');
/** YYYY-MM-DD */
const DateOnly = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'use the form YYYY-MM-DD');

export const CreateStudyRequest = z.object({
  name: Name('study name'),
  description: Description.optional(),
  /** required only when the biologist belongs to several labs */
  labId: Id.optional(),
});
export type CreateStudyRequest = z.infer<typeof CreateStudyRequest>;

export const UpdateStudyRequest = z
  .object({
    name: Name('study name').optional(),
    description: Description.optional(),
    /** the instrument uploads default to (null: none) */
    defaultInstrumentId: z
      .number({ error: (iss) => `defaultInstrumentId must be an instrument id or null, got ${JSON.stringify(iss.input) ?? String(iss.input)}` })
      .int({ error: (iss) => `defaultInstrumentId must be an instrument id or null, got ${String(iss.input)}` })
      .positive({ error: (iss) => `defaultInstrumentId must be an instrument id or null, got ${String(iss.input)}` })
      .nullable()
      .optional(),
  })
  .refine((v) => v.name !== undefined || v.description !== undefined || v.defaultInstrumentId !== undefined, { message: 'nothing to change: send name, description or defaultInstrumentId' });
export type UpdateStudyRequest = z.infer<typeof UpdateStudyRequest>;

/** Deleting a study needs its exact name typed again (confirmation). */
export const DeleteStudyRequest = z.object({ confirmName: z.string({ message: 'type the study name to confirm' }) });
export type DeleteStudyRequest = z.infer<typeof DeleteStudyRequest>;

export const CreateConditionRequest = z.object({ name: Name('condition name') });
export type CreateConditionRequest = z.infer<typeof CreateConditionRequest>;
export const UpdateConditionRequest = z.object({ name: Name('condition name') });
export type UpdateConditionRequest = z.infer<typeof UpdateConditionRequest>;

export const CreateCoverslipRequest = z.object({
  name: Name('coverslip name').optional(),
  /** defaults to the next free replicate number in the condition */
  replicate: z.number().int().positive().optional(),
  preparedOn: DateOnly.nullable().optional(),
  notes: z.string().max(4000).optional(),
});
export type CreateCoverslipRequest = z.infer<typeof CreateCoverslipRequest>;

export const UpdateCoverslipRequest = z
  .object({
    name: Name('coverslip name').optional(),
    replicate: z.number().int().positive().optional(),
    preparedOn: DateOnly.nullable().optional(),
    notes: z.string().max(4000).optional(),
  })
  .refine((v) => Object.values(v).some((x) => x !== undefined), { message: 'nothing to change' });
export type UpdateCoverslipRequest = z.infer<typeof UpdateCoverslipRequest>;

/**
 * New order of the conditions (all condition ids of the study, in order), and optionally for conditions
 * the order of their coverslips (all coverslip ids of that condition). A coverslip id listed under another
 * condition moves it there.
 */
export const ReorderRequest = z.object({
  conditionIds: z.array(Id).optional(),
  coverslips: z.array(z.object({ conditionId: Id, coverslipIds: z.array(Id) })).optional(),
});
export type ReorderRequest = z.infer<typeof ReorderRequest>;
