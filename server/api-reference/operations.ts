/**
 * What each API route takes and answers, by route key (the keys of server/auth/route-rules.ts): the shared zod
 * schemas the route itself parses and answers with, named here once so the OpenAPI document
 * (./document.ts) is generated from them. Every entry states its query and body (null: none), so a route
 * cannot be listed without saying what it takes; tests/api/openapi.test.ts fails when a route of the table has
 * no entry here, and checks the real answers of the GET routes against the documented response schemas.
 */
import type { ZodType } from 'zod';
import * as auth from '../../shared/schemas/auth.js';
import * as cellTable from '../../shared/schemas/cell-table.js';
import * as cells from '../../shared/schemas/cells.js';
import { IdParam, LinkToken, OkResponse } from '../../shared/schemas/common.js';
import * as compare from '../../shared/schemas/compare.js';
import * as fields from '../../shared/schemas/fields.js';
import * as instruments from '../../shared/schemas/instruments.js';
import * as notifications from '../../shared/schemas/notifications.js';
import * as outbox from '../../shared/schemas/outbox.js';
import * as people from '../../shared/schemas/people.js';
import * as recipes from '../../shared/schemas/recipes.js';
import * as reports from '../../shared/schemas/reports.js';
import * as runs from '../../shared/schemas/runs.js';
import * as sampleSheet from '../../shared/schemas/sample-sheet.js';
import * as shares from '../../shared/schemas/shares.js';
import * as studies from '../../shared/schemas/studies.js';
import * as tokens from '../../shared/schemas/tokens.js';
import * as usage from '../../shared/schemas/usage.js';
import { ApiDocument } from '../../shared/schemas/api-reference.js';
import { PIXELS_CONTENT_TYPE } from '../../shared/pixels/codec.js';

/** A named shared schema: the name becomes its entry in the document's components. */
export interface Named {
  name: string;
  schema: ZodType;
}
/** A response that is not JSON: its media type and what it holds. */
export interface Media {
  media: string;
  description: string;
}
/** A multipart/form-data body: each part is a file (`file`), several files (`files`) or JSON text of a schema. */
export interface Multipart {
  multipart: Record<string, 'file' | 'files' | Named>;
}

export interface Operation {
  summary: string;
  /** the query string's schema (a zod object), or null when the route reads none */
  query: Named | null;
  /** the JSON or multipart body, or null when the route reads none */
  body: Named | Multipart | null;
  response: Named | Media;
  /** success status when not 200 */
  status?: 201;
  /** another success status with the same response shape */
  also?: { status: number; description: string };
}

const N = <T extends Record<string, unknown>>(mod: T, name: keyof T & string): Named => ({ name, schema: mod[name] as ZodType });
const CSV = (what: string): Media => ({ media: 'text/csv', description: what });
const ok: Named = { name: 'OkResponse', schema: OkResponse };

/** Path parameters by name: the schema the route reads the segment with. */
export const PATH_PARAMS: Record<string, { schema: Named; description: string }> = {
  id: { schema: { name: 'Id', schema: IdParam }, description: 'the id of the resource named before it' },
  studyId: { schema: { name: 'Id', schema: IdParam }, description: 'a study id' },
  cellId: { schema: { name: 'Id', schema: IdParam }, description: 'a cell id' },
  fieldId: { schema: { name: 'Id', schema: IdParam }, description: 'a field id' },
  userId: { schema: { name: 'Id', schema: IdParam }, description: 'a user id' },
  otherId: { schema: { name: 'Id', schema: IdParam }, description: 'the id of the other recipe version' },
  token: { schema: { name: 'LinkToken', schema: LinkToken }, description: 'the token from the e-mailed link' },
  table: { schema: N(reports, 'CsvTable'), description: 'which table of the report' },
};

export const OPERATIONS: Record<string, Operation> = {
  'GET /api/health': { summary: 'Whether the server is up', query: null, body: null, response: ok },

  'POST /api/auth/login': { summary: 'Sign in with e-mail and password (sets the session cookie)', query: null, body: N(auth, 'LoginRequest'), response: N(auth, 'MeResponse') },
  'GET /api/auth/me': { summary: 'The signed-in user', query: null, body: null, response: N(auth, 'MeResponse') },
  'POST /api/auth/logout': { summary: 'Sign out (clears the session cookie)', query: null, body: null, response: ok },
  'POST /api/auth/password': { summary: 'Change your password', query: null, body: N(auth, 'ChangePasswordRequest'), response: N(auth, 'MeResponse') },
  'GET /api/auth/invitations/:token': { summary: 'What an invitation is for', query: null, body: null, response: N(auth, 'InvitationInfo') },
  'POST /api/auth/invitations/:token/accept': { summary: 'Accept an invitation and choose a password', query: null, body: N(auth, 'AcceptInvitationRequest'), response: N(auth, 'MeResponse') },

  'GET /api/users': { summary: 'Every user', query: null, body: null, response: N(people, 'UserListResponse') },
  'POST /api/users': { summary: 'Invite a new user', query: null, body: N(people, 'InviteUserRequest'), response: N(people, 'InviteUserResponse'), status: 201 },
  'POST /api/users/:id/invite': { summary: 'Send a user a new invitation', query: null, body: null, response: N(people, 'InviteUserResponse') },
  'PATCH /api/users/:id': { summary: "Change a user's name, roles, labs or disable them", query: null, body: N(people, 'UpdateUserRequest'), response: N(people, 'UserRow') },
  'GET /api/labs': { summary: 'Labs (facility managers: all; others: their own)', query: null, body: null, response: N(people, 'LabListResponse') },
  'POST /api/labs': { summary: 'Create a lab', query: null, body: N(people, 'CreateLabRequest'), response: N(people, 'Lab'), status: 201 },
  'PATCH /api/labs/:id': { summary: 'Rename a lab', query: null, body: N(people, 'UpdateLabRequest'), response: N(people, 'Lab') },
  'DELETE /api/labs/:id': { summary: 'Delete a lab without studies', query: null, body: null, response: ok },
  'PUT /api/labs/:id/members/:userId': { summary: 'Add a user to a lab', query: null, body: null, response: N(people, 'Lab') },
  'DELETE /api/labs/:id/members/:userId': { summary: 'Remove a user from a lab', query: null, body: null, response: N(people, 'Lab') },

  'GET /api/studies': { summary: 'The studies you may see', query: null, body: null, response: N(studies, 'StudyListResponse') },
  'POST /api/studies': { summary: 'Create a study', query: null, body: N(studies, 'CreateStudyRequest'), response: N(studies, 'StudyDetail'), status: 201 },
  'GET /api/studies/:studyId': { summary: 'A study with its conditions and coverslips', query: null, body: null, response: N(studies, 'StudyDetail') },
  'PATCH /api/studies/:studyId': { summary: "Change a study's name or description", query: null, body: N(studies, 'UpdateStudyRequest'), response: N(studies, 'StudyDetail') },
  'DELETE /api/studies/:studyId': { summary: 'Delete a study (its name confirms it)', query: null, body: N(studies, 'DeleteStudyRequest'), response: ok },
  'POST /api/studies/:studyId/conditions': { summary: 'Add a condition', query: null, body: N(studies, 'CreateConditionRequest'), response: N(studies, 'StudyDetail'), status: 201 },
  'PATCH /api/conditions/:id': { summary: 'Rename a condition', query: null, body: N(studies, 'UpdateConditionRequest'), response: N(studies, 'StudyDetail') },
  'DELETE /api/conditions/:id': { summary: 'Delete a condition', query: null, body: null, response: N(studies, 'StudyDetail') },
  'POST /api/conditions/:id/coverslips': { summary: 'Add a coverslip to a condition', query: null, body: N(studies, 'CreateCoverslipRequest'), response: N(studies, 'StudyDetail'), status: 201 },
  'PATCH /api/coverslips/:id': { summary: 'Change a coverslip', query: null, body: N(studies, 'UpdateCoverslipRequest'), response: N(studies, 'StudyDetail') },
  'DELETE /api/coverslips/:id': { summary: 'Delete a coverslip', query: null, body: null, response: N(studies, 'StudyDetail') },
  'POST /api/studies/:studyId/reorder': { summary: 'Reorder conditions and coverslips', query: null, body: N(studies, 'ReorderRequest'), response: N(studies, 'StudyDetail') },

  'POST /api/studies/:id/sample-sheet/check': {
    summary: 'Check a sample sheet (CSV) against a study before sending its files; stores nothing',
    query: null,
    body: N(sampleSheet, 'SampleSheetCheckRequest'),
    response: N(sampleSheet, 'SampleSheetCheckResponse'),
  },
  'POST /api/studies/:id/sample-sheet/apply': {
    summary: "Apply a sample sheet that checks clean: create the conditions and coverslips it names, answer the uploads still to send",
    query: null,
    body: N(sampleSheet, 'SampleSheetCheckRequest'),
    response: N(sampleSheet, 'SampleSheetApplyResponse'),
  },
  'POST /api/coverslips/:id/fields': {
    summary: 'Upload TIFF files as fields of a coverslip',
    query: null,
    body: { multipart: { files: 'files', plan: N(fields, 'UploadPlan') } },
    response: N(fields, 'UploadResponse'),
    status: 201,
    also: { status: 207, description: 'some fields were stored and others refused: each result says which' },
  },
  'GET /api/coverslips/:id/fields': { summary: 'The fields of a coverslip', query: null, body: null, response: N(fields, 'CoverslipFieldsResponse') },
  'GET /api/studies/:studyId/fields': { summary: 'Every field of a study', query: null, body: null, response: N(fields, 'StudyFieldsResponse') },
  'GET /api/fields/:id': { summary: 'A field with its files and channel facts', query: null, body: null, response: N(fields, 'FieldDetail') },
  'DELETE /api/fields/:id': { summary: 'Delete a field', query: null, body: null, response: N(fields, 'DeleteFieldResponse') },
  'PUT /api/fields/:id/pixel-size': { summary: 'Set or clear the µm per pixel of a field whose files carry none', query: null, body: N(fields, 'SetFieldPixelSizeRequest'), response: N(fields, 'FieldSummary') },
  'PUT /api/fields/:id/z-step': { summary: 'Set or clear the µm between the slices of a stack whose files state none', query: null, body: N(fields, 'SetFieldZStepRequest'), response: N(fields, 'FieldSummary') },
  'PUT /api/fields/:id/instrument': { summary: 'Set or clear the instrument a field was acquired on', query: null, body: N(fields, 'SetFieldInstrumentRequest'), response: N(fields, 'FieldSummary') },
  'GET /api/fields/:id/preview.png': { summary: 'A two-channel colour preview', query: N(fields, 'PreviewQuery'), body: null, response: { media: 'image/png', description: 'the preview picture' } },
  'GET /api/fields/:id/shift': { summary: "A field's channel shift with the cross-correlation curves around it (measured, not stored)", query: N(instruments, 'FieldShiftQuery'), body: null, response: N(instruments, 'FieldShift') },
  'GET /api/fields/:id/pixels': {
    summary: "A field's raw pixels of both channels",
    query: N(fields, 'PixelsQuery'),
    body: null,
    response: { media: PIXELS_CONTENT_TYPE, description: 'the binary pixel format of shared/pixels/codec.ts: a 24-byte header, then channel 1 and channel 2' },
  },

  'GET /api/fields/:id/cells': { summary: 'The outlines (cells and background regions) of a field', query: null, body: null, response: N(cells, 'CellList') },
  'POST /api/fields/:id/cells': { summary: 'Draw an outline', query: null, body: N(cells, 'CreateCellRequest'), response: N(cells, 'CellResponse'), status: 201 },
  'PATCH /api/cells/:id': { summary: 'Change an outline', query: null, body: N(cells, 'UpdateCellRequest'), response: N(cells, 'CellResponse') },
  'DELETE /api/cells/:id': { summary: 'Delete an outline', query: null, body: null, response: N(cells, 'DeleteCellResponse') },
  'POST /api/fields/:id/cells/import': { summary: 'Import cells from a label-image TIFF', query: null, body: { multipart: { file: 'file' } }, response: N(cells, 'ImportLabelsResponse'), status: 201 },
  'GET /api/fields/:id/cells.geojson': {
    summary: "A field's outlines as GeoJSON (RFC 7946) in pixel coordinates",
    query: null,
    body: null,
    response: { media: 'application/geo+json', description: 'a FeatureCollection of Polygon and MultiPolygon features (the OutlineCollection schema)' },
  },
  'POST /api/fields/:id/cells/geojson': {
    summary: 'Import outlines from a GeoJSON file (all or nothing; ?replace=1 replaces earlier GeoJSON imports)',
    query: null,
    body: { multipart: { file: N(cells, 'OutlineCollection') } },
    response: N(cells, 'ImportOutlinesResponse'),
    status: 201,
  },
  'GET /api/fields/:id/cells/labels.tiff': { summary: "A field's cells as a label-image TIFF (0 = no cell)", query: null, body: null, response: { media: 'image/tiff', description: 'a 16- or 32-bit label image' } },
  'POST /api/fields/:id/cells/auto': { summary: 'Find cells automatically', query: null, body: N(cells, 'AutoOutlineRequest'), response: N(cells, 'AutoOutlineResponse'), status: 201 },

  'GET /api/recipes': { summary: 'Recipe versions', query: N(recipes, 'RecipeListQuery'), body: null, response: N(recipes, 'RecipeListResponse') },
  'POST /api/recipes': { summary: 'Propose a new recipe (a draft)', query: null, body: N(recipes, 'CreateRecipeRequest'), response: N(recipes, 'RecipeDetail'), status: 201 },
  'GET /api/recipes/:id': { summary: 'A recipe version with its history', query: null, body: null, response: N(recipes, 'RecipeDetail') },
  'GET /api/recipes/:id/diff/:otherId': { summary: 'The settings that differ between two versions', query: null, body: null, response: N(recipes, 'RecipeDiffResponse') },
  'PATCH /api/recipes/:id': { summary: 'Change a draft or returned recipe', query: null, body: N(recipes, 'UpdateRecipeRequest'), response: N(recipes, 'RecipeDetail') },
  'POST /api/recipes/:id/versions': { summary: 'Start a new version from an existing one', query: null, body: N(recipes, 'UpdateRecipeRequest'), response: N(recipes, 'RecipeDetail'), status: 201 },
  'POST /api/recipes/:id/submit': { summary: 'Submit a recipe for review', query: null, body: N(recipes, 'RecipeTransitionRequest'), response: N(recipes, 'RecipeDetail') },
  'POST /api/recipes/:id/approve': { summary: 'Approve a submitted recipe', query: null, body: N(recipes, 'RecipeTransitionRequest'), response: N(recipes, 'RecipeDetail') },
  'POST /api/recipes/:id/return': { summary: 'Return a submitted recipe with a note', query: null, body: N(recipes, 'RecipeTransitionRequest'), response: N(recipes, 'RecipeDetail') },
  'POST /api/recipes/:id/retire': { summary: 'Retire an approved recipe', query: null, body: N(recipes, 'RecipeTransitionRequest'), response: N(recipes, 'RecipeDetail') },

  'GET /api/instruments': { summary: 'Instruments with their latest calibrations', query: null, body: null, response: N(instruments, 'InstrumentListResponse') },
  'POST /api/instruments': { summary: 'Record an instrument (name, objective, channel pair)', query: null, body: N(instruments, 'CreateInstrumentRequest'), response: N(instruments, 'InstrumentDetail'), status: 201 },
  'GET /api/instruments/:id': { summary: 'An instrument with every calibration version', query: null, body: null, response: N(instruments, 'InstrumentDetail') },
  'POST /api/instruments/:id/calibrations': { summary: "Start a new calibration version (draft) of an instrument's shift and bleed-through", query: null, body: N(instruments, 'CreateCalibrationRequest'), response: N(instruments, 'CalibrationDetail'), status: 201 },
  'GET /api/calibrations/:id': { summary: 'A calibration version with its history', query: null, body: null, response: N(instruments, 'CalibrationDetail') },
  'PATCH /api/calibrations/:id': { summary: 'Change a draft calibration', query: null, body: N(instruments, 'UpdateCalibrationRequest'), response: N(instruments, 'CalibrationDetail') },
  'POST /api/calibrations/:id/measure-shift': { summary: "Measure a draft's channel shift on a stored bead field", query: null, body: N(instruments, 'MeasureShiftRequest'), response: N(instruments, 'CalibrationDetail') },
  'POST /api/calibrations/:id/measure-bleed': { summary: "Measure a draft's bleed-through coefficient on stored single-label control fields", query: null, body: N(instruments, 'MeasureBleedRequest'), response: N(instruments, 'CalibrationDetail') },
  'POST /api/calibrations/:id/submit': { summary: 'Submit a calibration for review', query: null, body: N(instruments, 'CalibrationTransitionRequest'), response: N(instruments, 'CalibrationDetail') },
  'POST /api/calibrations/:id/approve': { summary: 'Approve a submitted calibration', query: null, body: N(instruments, 'CalibrationTransitionRequest'), response: N(instruments, 'CalibrationDetail') },
  'POST /api/calibrations/:id/return': { summary: 'Return a submitted calibration with a note', query: null, body: N(instruments, 'CalibrationTransitionRequest'), response: N(instruments, 'CalibrationDetail') },
  'POST /api/calibrations/:id/retire': { summary: 'Retire an approved calibration', query: null, body: N(instruments, 'CalibrationTransitionRequest'), response: N(instruments, 'CalibrationDetail') },

  'POST /api/runs': { summary: 'Start a run of a recipe version over a study, condition, coverslip or field', query: null, body: N(runs, 'CreateRunRequest'), response: N(runs, 'RunDetail'), status: 201 },
  'POST /api/runs/check': { summary: 'Check which fields of a run scope the recipe can measure, and why the others cannot', query: null, body: N(runs, 'CreateRunRequest'), response: N(runs, 'RunCheckResponse') },
  'GET /api/runs': { summary: 'Runs in the studies you may see', query: N(runs, 'RunListQuery'), body: null, response: N(runs, 'RunListResponse') },
  'GET /api/runs/:id': { summary: 'A run with its per-field progress', query: null, body: null, response: N(runs, 'RunDetail') },
  'GET /api/runs/:id/measurements': {
    summary: "A run's measurements, one page at a time (every registry measure, the ids of cell, field, coverslip and condition, provenance)",
    query: N(runs, 'RunMeasurementsQuery'),
    body: null,
    response: N(runs, 'RunMeasurementsPage'),
  },
  'GET /api/runs/:id/measurements.csv': { summary: "All of a run's measurements as CSV, streamed", query: null, body: null, response: CSV('one row per measurement, the columns of MEASUREMENT_CSV_COLUMNS') },
  'GET /api/runs/:id/fields/:fieldId/spots': { summary: "The spots a run found in one field's cells, by cell and channel", query: null, body: null, response: N(runs, 'FieldSpotsResponse') },

  'GET /api/studies/:studyId/measurement-sources': { summary: 'The recipes and runs that measured a study', query: null, body: null, response: N(cellTable, 'MeasurementSources') },
  'GET /api/studies/:studyId/cell-table': { summary: 'One page of the Cell table', query: N(cellTable, 'GridQuery'), body: null, response: N(cellTable, 'GridResponse') },
  'GET /api/studies/:studyId/cells.csv': { summary: 'The Cell table as CSV (the same filters)', query: N(cellTable, 'CsvQuery'), body: null, response: CSV('one row per cell, the chosen columns') },
  'POST /api/cells/:cellId/exclusion': { summary: 'Exclude a cell from statistics, with a reason', query: null, body: N(cellTable, 'ExcludeRequest'), response: N(cellTable, 'ExclusionState') },
  'DELETE /api/cells/:cellId/exclusion': { summary: 'Restore an excluded cell', query: null, body: N(cellTable, 'RestoreRequest'), response: N(cellTable, 'ExclusionState') },
  'GET /api/cells/:cellId/exclusion-history': { summary: 'Who excluded and restored a cell, and why', query: null, body: null, response: N(cellTable, 'ExclusionHistory') },

  'GET /api/studies/:studyId/compare': { summary: 'Compare conditions: coverslip means, tests, effect sizes, histograms', query: N(compare, 'CompareQuery'), body: null, response: N(compare, 'Comparison') },
  'GET /api/studies/:studyId/compare/coverslips.csv': { summary: 'The coverslip means of a comparison as CSV', query: N(compare, 'CompareQuery'), body: null, response: CSV('one row per coverslip') },
  'GET /api/studies/:studyId/compare/cells.csv': { summary: 'The cell values of a comparison as CSV', query: N(compare, 'CompareQuery'), body: null, response: CSV('one row per cell') },

  'GET /api/studies/:studyId/reports': { summary: 'The reports of a study', query: null, body: null, response: N(reports, 'ReportListResponse') },
  'POST /api/studies/:studyId/reports': { summary: 'Make a report (a frozen snapshot)', query: null, body: N(reports, 'CreateReportRequest'), response: N(reports, 'ReportDetail'), status: 201 },
  'GET /api/reports/:id': { summary: 'A report', query: null, body: null, response: N(reports, 'ReportDetail') },
  'GET /api/reports/:id/csv/:table': { summary: 'A table of a report as CSV', query: null, body: null, response: CSV('the table') },

  'GET /api/reports/:id/shares': { summary: 'The share links of a report', query: null, body: null, response: N(shares, 'ShareListResponse') },
  'POST /api/reports/:id/shares': { summary: 'E-mail share links to readers', query: null, body: N(shares, 'CreateShareRequest'), response: N(shares, 'ShareListResponse'), status: 201 },
  'POST /api/shares/:id/revoke': { summary: 'Revoke a share link', query: null, body: null, response: N(shares, 'ShareLinkSummary') },
  'POST /api/shares/:id/resend': { summary: 'Send a share link again', query: null, body: null, response: N(shares, 'ShareLinkSummary') },
  'GET /api/shared/:token': { summary: 'A shared report, by its link', query: null, body: null, response: N(shares, 'SharedReportResponse') },
  'GET /api/shared/:token/csv/:table': { summary: 'A table of a shared report as CSV', query: null, body: null, response: CSV('the table') },

  'GET /api/outbox': { summary: 'E-mails the server sent, newest first', query: N(outbox, 'OutboxQuery'), body: null, response: N(outbox, 'OutboxListResponse') },
  'GET /api/outbox/:id': { summary: 'One sent e-mail', query: null, body: null, response: N(outbox, 'OutboxMessage') },

  'GET /api/tokens': { summary: 'Your personal API tokens', query: null, body: null, response: N(tokens, 'TokenListResponse') },
  'POST /api/tokens': { summary: 'Create a personal API token (the secret is shown once)', query: null, body: N(tokens, 'CreateTokenRequest'), response: N(tokens, 'CreatedToken'), status: 201 },
  'DELETE /api/tokens/:id': { summary: 'Revoke a personal API token', query: null, body: null, response: N(tokens, 'TokenSummary') },

  'GET /api/notifications': { summary: 'Which e-mail notifications you receive', query: null, body: null, response: N(notifications, 'NotificationSettings') },
  'PUT /api/notifications': { summary: 'Choose which e-mail notifications you receive (the kinds listed are turned off)', query: null, body: N(notifications, 'UpdateNotificationsRequest'), response: N(notifications, 'NotificationSettings') },

  'GET /api/usage': { summary: 'Facility usage per lab and month', query: N(usage, 'UsageQuery'), body: null, response: N(usage, 'UsageResponse') },
  'GET /api/usage.csv': { summary: 'Facility usage per lab and month as CSV', query: N(usage, 'UsageQuery'), body: null, response: CSV('one row per lab and month') },

  'GET /api/openapi.json': { summary: 'This API as an OpenAPI 3.1 document', query: null, body: null, response: { name: 'ApiDocument', schema: ApiDocument } },
};
