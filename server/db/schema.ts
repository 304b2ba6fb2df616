/**
 * Syntopy data model (Drizzle, SQLite). Migrations are generated into drizzle/ with `npm run db:generate`.
 * Timestamps are ISO-8601 strings (UTC); JSON columns are text with mode 'json'.
 */
import { sqliteTable, text, integer, real, primaryKey, index, uniqueIndex } from 'drizzle-orm/sqlite-core';
import { sql } from 'drizzle-orm';
import type { CellOrigin } from '../../shared/schemas/cells.js';
import type { CalibrationSources } from '../../shared/schemas/instruments.js';

const now = sql`(strftime('%Y-%m-%dT%H:%M:%fZ','now'))`;
const id = () => integer('id').primaryKey({ autoIncrement: true });
const createdAt = () => text('created_at').notNull().default(now);

export const ROLES = ['microscopist', 'facility_manager', 'biologist', 'collaborator'] as const;
export type Role = (typeof ROLES)[number];

export const users = sqliteTable('users', {
  id: id(),
  email: text('email').notNull().unique(),
  name: text('name').notNull(),
  passwordHash: text('password_hash'),
  roles: text('roles', { mode: 'json' }).$type<Role[]>().notNull(),
  disabled: integer('disabled', { mode: 'boolean' }).notNull().default(false),
  /** bumped on password change / disable so older sessions stop working */
  sessionVersion: integer('session_version').notNull().default(0),
  createdAt: createdAt(),
});

/** A kind of e-mail notification a user turned off (shared/schemas/notifications.ts); no row: it is on. */
export const notificationOptOuts = sqliteTable('notification_opt_outs', {
  userId: integer('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  kind: text('kind', { enum: ['recipe_submitted', 'recipe_reviewed', 'calibration_approved', 'run_finished'] }).notNull(),
}, (t) => [primaryKey({ columns: [t.userId, t.kind] })]);

export const invitations = sqliteTable('invitations', {
  id: id(),
  userId: integer('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  tokenHash: text('token_hash').notNull().unique(),
  expiresAt: text('expires_at').notNull(),
  usedAt: text('used_at'),
  createdBy: integer('created_by').references(() => users.id),
  createdAt: createdAt(),
});

/** Session tokens ended by sign-out before their expiry (pruned once expired). */
export const revokedSessions = sqliteTable('revoked_sessions', {
  jti: text('jti').primaryKey(),
  expiresAt: text('expires_at').notNull(),
});

/**
 * Personal API tokens (server/auth/tokens.ts). Only the SHA-256 of the token is stored; `hint` is its first
 * characters for recognising it in a list. `sessionVersion` is the owner's at creation: a password change or
 * disabling (which bump the user's) ends the token like a session.
 */
export const apiTokens = sqliteTable('api_tokens', {
  id: id(),
  userId: integer('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  name: text('name').notNull(),
  scope: text('scope', { enum: ['read', 'write'] }).notNull(),
  tokenHash: text('token_hash').notNull().unique(),
  hint: text('hint').notNull(),
  sessionVersion: integer('session_version').notNull(),
  expiresAt: text('expires_at').notNull(),
  lastUsedAt: text('last_used_at'),
  revokedAt: text('revoked_at'),
  createdAt: createdAt(),
}, (t) => [index('api_tokens_user').on(t.userId)]);

export const loginAttempts = sqliteTable('login_attempts', {
  id: id(),
  key: text('key').notNull(),
  at: text('at').notNull().default(now),
}, (t) => [index('login_attempts_key').on(t.key, t.at)]);

export const labs = sqliteTable('labs', {
  id: id(),
  name: text('name').notNull().unique(),
  createdAt: createdAt(),
});

export const labMembers = sqliteTable('lab_members', {
  labId: integer('lab_id').notNull().references(() => labs.id, { onDelete: 'cascade' }),
  userId: integer('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
}, (t) => [primaryKey({ columns: [t.labId, t.userId] })]);

export const studies = sqliteTable('studies', {
  id: id(),
  labId: integer('lab_id').notNull().references(() => labs.id),
  ownerId: integer('owner_id').notNull().references(() => users.id),
  name: text('name').notNull(),
  description: text('description').notNull().default(''),
  isDemo: integer('is_demo', { mode: 'boolean' }).notNull().default(false),
  /** the instrument new uploads of the study are recorded on unless the upload names another (null: none) */
  defaultInstrumentId: integer('default_instrument_id').references(() => instruments.id),
  createdAt: createdAt(),
});

/** Explicit study membership beyond the lab (e.g. a collaborator invited to one study). */
export const studyMembers = sqliteTable('study_members', {
  studyId: integer('study_id').notNull().references(() => studies.id, { onDelete: 'cascade' }),
  userId: integer('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  access: text('access', { enum: ['read', 'write'] }).notNull().default('read'),
}, (t) => [primaryKey({ columns: [t.studyId, t.userId] })]);

export const conditions = sqliteTable('conditions', {
  id: id(),
  studyId: integer('study_id').notNull().references(() => studies.id, { onDelete: 'cascade' }),
  name: text('name').notNull(),
  position: integer('position').notNull().default(0),
  createdAt: createdAt(),
});

export const coverslips = sqliteTable('coverslips', {
  id: id(),
  conditionId: integer('condition_id').notNull().references(() => conditions.id, { onDelete: 'cascade' }),
  name: text('name').notNull(),
  replicate: integer('replicate').notNull(),
  preparedOn: text('prepared_on'),
  notes: text('notes').notNull().default(''),
  position: integer('position').notNull().default(0),
  createdAt: createdAt(),
});

/** Content-addressed stored files (one row per distinct SHA-256). */
export const files = sqliteTable('files', {
  sha256: text('sha256').primaryKey(),
  size: integer('size').notNull(),
  storeKey: text('store_key').notNull(),
  originalName: text('original_name').notNull(),
  mime: text('mime').notNull().default('image/tiff'),
  createdAt: createdAt(),
});

export type ChannelFacts = { min: number; max: number; mean: number; saturatedFraction: number; plateauFraction: number | null };

export const fields = sqliteTable('fields', {
  id: id(),
  coverslipId: integer('coverslip_id').notNull().references(() => coverslips.id, { onDelete: 'cascade' }),
  name: text('name').notNull(),
  /** channel 1 file and channel 2 file; the same hash when one multi-channel file is used */
  file1Sha: text('file1_sha').notNull().references(() => files.sha256),
  file2Sha: text('file2_sha').notNull().references(() => files.sha256),
  /** 1-based channel index inside file1 / file2 */
  channel1: integer('channel1').notNull().default(1),
  channel2: integer('channel2').notNull().default(1),
  channelNames: text('channel_names', { mode: 'json' }).$type<[string | null, string | null]>().notNull(),
  fileSize: integer('file_size').notNull(),
  width: integer('width').notNull(),
  height: integer('height').notNull(),
  sizeZ: integer('size_z').notNull().default(1),
  bitDepth: integer('bit_depth').notNull(),
  sampleFormat: text('sample_format', { enum: ['uint', 'float'] }).notNull(),
  pixelSizeUm: real('pixel_size_um'),
  /** the instrument the field was recorded on (its approved calibration is what runs apply); null when not given */
  instrumentId: integer('instrument_id').references(() => instruments.id),
  /** distance between z slices in µm (OME PhysicalSizeZ), null when unknown or a single plane */
  zStepUm: real('z_step_um'),
  facts: text('facts', { mode: 'json' }).$type<{ ch1: ChannelFacts; ch2: ChannelFacts }>().notNull(),
  status: text('status', { enum: ['ready', 'deleted'] }).notNull().default('ready'),
  uploadedBy: integer('uploaded_by').references(() => users.id),
  deletedAt: text('deleted_at'),
  createdAt: createdAt(),
}, (t) => [index('fields_coverslip').on(t.coverslipId)]);

/** shared/schemas/cells.ts CellGeometrySchema; `z` is a 1-based inclusive slice range (absent = every slice) */
export type CellGeometry =
  | { kind: 'polygon'; points: [number, number][]; z?: [number, number] }
  | { kind: 'rect'; x: number; y: number; width: number; height: number; z?: [number, number] }
  | { kind: 'ellipse'; cx: number; cy: number; rx: number; ry: number; z?: [number, number] }
  | { kind: 'freehand'; points: [number, number][]; z?: [number, number] }
  | { kind: 'label'; label: number; rle: number[] }
  | { kind: 'label3d'; label: number; z: [number, number]; slices: number[][] };

export const cells = sqliteTable('cells', {
  id: id(),
  fieldId: integer('field_id').notNull().references(() => fields.id, { onDelete: 'cascade' }),
  name: text('name').notNull(),
  /** 'cell' regions are measured; 'background' marks a region for background subtraction */
  role: text('role', { enum: ['cell', 'background'] }).notNull().default('cell'),
  geometry: text('geometry', { mode: 'json' }).$type<CellGeometry>().notNull(),
  source: text('source', { enum: ['drawn', 'label_image', 'automatic', 'seed', 'geojson'] }).notNull().default('drawn'),
  /** how the cell was made, with the settings (shared/schemas/cells.ts CellOrigin); null on rows stored before */
  origin: text('origin', { mode: 'json' }).$type<CellOrigin>(),
  pixelCount: integer('pixel_count').notNull().default(0),
  excluded: integer('excluded', { mode: 'boolean' }).notNull().default(false),
  exclusionReason: text('exclusion_reason'),
  excludedBy: integer('excluded_by').references(() => users.id),
  excludedAt: text('excluded_at'),
  createdBy: integer('created_by').references(() => users.id),
  deletedAt: text('deleted_at'),
  createdAt: createdAt(),
}, (t) => [index('cells_field').on(t.fieldId)]);

export const RECIPE_STATUSES = ['draft', 'submitted', 'approved', 'returned', 'retired'] as const;

export const recipes = sqliteTable('recipes', {
  id: id(),
  /** all versions of one recipe share a family id (the id of version 1) */
  familyId: integer('family_id'),
  name: text('name').notNull(),
  version: integer('version').notNull(),
  status: text('status', { enum: RECIPE_STATUSES }).notNull().default('draft'),
  settings: text('settings', { mode: 'json' }).$type<Record<string, unknown>>().notNull(),
  description: text('description').notNull().default(''),
  proposerId: integer('proposer_id').references(() => users.id),
  reviewerId: integer('reviewer_id').references(() => users.id),
  reviewNote: text('review_note'),
  submittedAt: text('submitted_at'),
  reviewedAt: text('reviewed_at'),
  createdAt: createdAt(),
}, (t) => [uniqueIndex('recipes_family_version').on(t.familyId, t.version)]);

/** A microscope set-up (objective and channel pair) whose calibrations runs apply (issue 15). */
export const instruments = sqliteTable('instruments', {
  id: id(),
  name: text('name').notNull().unique(),
  objective: text('objective').notNull().default(''),
  channel1: text('channel1').notNull(),
  channel2: text('channel2').notNull(),
  createdBy: integer('created_by').references(() => users.id),
  createdAt: createdAt(),
});

/**
 * A versioned calibration of an instrument: channel 2's shift (dx, dy, px; ch2(x + dx, y + dy) ≈ ch1(x, y)) and
 * the bleed-through coefficients a21, a12, each null until measured; the recipe life cycle (RECIPE_STATUSES).
 */
export const calibrations = sqliteTable('calibrations', {
  id: id(),
  instrumentId: integer('instrument_id').notNull().references(() => instruments.id),
  version: integer('version').notNull(),
  status: text('status', { enum: RECIPE_STATUSES }).notNull().default('draft'),
  dx: real('dx'),
  dy: real('dy'),
  a21: real('a21'),
  a12: real('a12'),
  note: text('note').notNull().default(''),
  /** the stored fields each value was measured from in the app (shared/schemas/instruments.ts CalibrationSources); null: none */
  sources: text('sources', { mode: 'json' }).$type<CalibrationSources>(),
  proposerId: integer('proposer_id').references(() => users.id),
  reviewerId: integer('reviewer_id').references(() => users.id),
  reviewNote: text('review_note'),
  submittedAt: text('submitted_at'),
  reviewedAt: text('reviewed_at'),
  createdAt: createdAt(),
}, (t) => [uniqueIndex('calibrations_instrument_version').on(t.instrumentId, t.version)]);

export const runs = sqliteTable('runs', {
  id: id(),
  studyId: integer('study_id').notNull().references(() => studies.id, { onDelete: 'cascade' }),
  recipeId: integer('recipe_id').notNull().references(() => recipes.id),
  scopeKind: text('scope_kind', { enum: ['field', 'coverslip', 'condition', 'study'] }).notNull(),
  scopeId: integer('scope_id').notNull(),
  status: text('status', { enum: ['queued', 'running', 'done', 'failed', 'partial'] }).notNull().default('queued'),
  fieldsTotal: integer('fields_total').notNull().default(0),
  fieldsDone: integer('fields_done').notNull().default(0),
  currentField: text('current_field'),
  error: text('error'),
  provisional: integer('provisional', { mode: 'boolean' }).notNull().default(false),
  seed: integer('seed').notNull().default(1),
  engineVersion: text('engine_version'),
  startedBy: integer('started_by').references(() => users.id),
  startedAt: text('started_at'),
  finishedAt: text('finished_at'),
  createdAt: createdAt(),
});

/** One row per field of a run: the durable unit of work. */
export const runFields = sqliteTable('run_fields', {
  runId: integer('run_id').notNull().references(() => runs.id, { onDelete: 'cascade' }),
  fieldId: integer('field_id').notNull().references(() => fields.id),
  status: text('status', { enum: ['queued', 'running', 'done', 'failed'] }).notNull().default('queued'),
  error: text('error'),
  attempts: integer('attempts').notNull().default(0),
  finishedAt: text('finished_at'),
}, (t) => [primaryKey({ columns: [t.runId, t.fieldId] })]);

/**
 * One row per measured cell and run. The measure columns are written out for Drizzle; their names are those of
 * the coefficient registry (shared/coefficients.ts `column`, property = registry key), which
 * tests/coefficients/registry.test.ts checks entry by entry.
 */
export const measurements = sqliteTable('measurements', {
  id: id(),
  runId: integer('run_id').notNull().references(() => runs.id, { onDelete: 'cascade' }),
  cellId: integer('cell_id').notNull().references(() => cells.id),
  fieldId: integer('field_id').notNull().references(() => fields.id),
  pixels: integer('pixels').notNull(),
  pearson: real('pearson'),
  spearman: real('spearman'),
  kendallTauB: real('kendall_tau_b'),
  distanceCorrelation: real('distance_correlation'),
  dcorBiasCorrectedSq: real('dcor_bias_corrected_sq'),
  dcorTStat: real('dcor_t_stat'),
  dcorDf: real('dcor_df'),
  dcorPValue: real('dcor_p_value'),
  mandersM1: real('manders_m1'),
  mandersM2: real('manders_m2'),
  overlap: real('overlap'),
  k1: real('k1'),
  k2: real('k2'),
  icq: real('icq'),
  micE: real('mic_e'),
  ticE: real('tic_e'),
  randomizationP: real('randomization_p'),
  randomizationFractionBelow: real('randomization_fraction_below'),
  spotCount1: real('spot_count1'),
  spotCount2: real('spot_count2'),
  spotPaired1: real('spot_paired1'),
  spotPaired2: real('spot_paired2'),
  spotMutualPairs: real('spot_mutual_pairs'),
  spotMedianNearest1: real('spot_median_nearest1'),
  spotMedianNearest2: real('spot_median_nearest2'),
  spotPValue: real('spot_p_value'),
  spotChanceFraction1: real('spot_chance_fraction1'),
  threshold1: real('threshold1'),
  threshold2: real('threshold2'),
  thresholdMethod: text('threshold_method'),
  background1: real('background1'),
  background2: real('background2'),
  saturatedFraction1: real('saturated_fraction1'),
  saturatedFraction2: real('saturated_fraction2'),
  mean1: real('mean1'),
  mean2: real('mean2'),
  provisional: integer('provisional', { mode: 'boolean' }).notNull().default(false),
  /** recipe id+version, engine version, input hashes, seed, z handling, time */
  provenance: text('provenance', { mode: 'json' }).$type<Record<string, unknown>>().notNull(),
  createdAt: createdAt(),
}, (t) => [uniqueIndex('measurements_run_cell').on(t.runId, t.cellId), index('measurements_field').on(t.fieldId)]);

/**
 * The spots a run found in each measured cell (recipe objects section on), per channel: centre (x right, y down,
 * pixels, origin the top-left corner of pixel (0, 0)), peak pixel intensity and integrated intensity above the
 * local background (shared/analysis/spots.ts). Read by the field workspace.
 */
export const spots = sqliteTable('spots', {
  id: id(),
  runId: integer('run_id').notNull().references(() => runs.id, { onDelete: 'cascade' }),
  fieldId: integer('field_id').notNull().references(() => fields.id, { onDelete: 'cascade' }),
  cellId: integer('cell_id').notNull().references(() => cells.id, { onDelete: 'cascade' }),
  channel: integer('channel').notNull(),
  x: real('x').notNull(),
  y: real('y').notNull(),
  /** slices of the field's stack (0-based, a slice's centre at +0.5) for spots found in 3D; null in 2D */
  z: real('z'),
  peak: real('peak').notNull(),
  integrated: real('integrated').notNull(),
}, (t) => [index('spots_run_field').on(t.runId, t.fieldId)]);

export const reports = sqliteTable('reports', {
  id: id(),
  studyId: integer('study_id').notNull().references(() => studies.id, { onDelete: 'cascade' }),
  title: text('title').notNull(),
  notes: text('notes').notNull().default(''),
  /** frozen snapshot: numbers, plot data, recipes, engine version, fields, exclusions, methods text */
  snapshot: text('snapshot', { mode: 'json' }).$type<Record<string, unknown>>().notNull(),
  createdBy: integer('created_by').references(() => users.id),
  createdAt: createdAt(),
});

export const shareLinks = sqliteTable('share_links', {
  id: id(),
  reportId: integer('report_id').notNull().references(() => reports.id, { onDelete: 'cascade' }),
  email: text('email').notNull(),
  /** jti of the signed token */
  tokenId: text('token_id').notNull().unique(),
  message: text('message').notNull().default(''),
  expiresAt: text('expires_at').notNull(),
  revokedAt: text('revoked_at'),
  lastOpenedAt: text('last_opened_at'),
  openCount: integer('open_count').notNull().default(0),
  createdBy: integer('created_by').references(() => users.id),
  createdAt: createdAt(),
});

export const shareOpenings = sqliteTable('share_openings', {
  id: id(),
  shareLinkId: integer('share_link_id').notNull().references(() => shareLinks.id, { onDelete: 'cascade' }),
  at: text('at').notNull().default(now),
  ip: text('ip'),
  userAgent: text('user_agent'),
});

export const auditEvents = sqliteTable('audit_events', {
  id: id(),
  at: text('at').notNull().default(now),
  actorId: integer('actor_id').references(() => users.id),
  action: text('action').notNull(),
  entity: text('entity').notNull(),
  entityId: integer('entity_id'),
  studyId: integer('study_id'),
  details: text('details', { mode: 'json' }).$type<Record<string, unknown>>().notNull().default({}),
}, (t) => [index('audit_entity').on(t.entity, t.entityId)]);

export const outgoingMail = sqliteTable('outgoing_mail', {
  id: id(),
  messageId: text('message_id'),
  from: text('from_addr').notNull(),
  to: text('to_addr').notNull(),
  subject: text('subject').notNull(),
  text: text('text').notNull(),
  html: text('html'),
  /** 'sink' = captured by the embedded SMTP sink; 'relay' = handed to SMTP_URL */
  via: text('via', { enum: ['sink', 'relay'] }).notNull(),
  receivedAt: text('received_at').notNull().default(now),
});
