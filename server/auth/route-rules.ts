/**
 * The permission rule of every API route, in one table. This file does not enforce anything (the routes call
 * server/auth/policy.ts themselves); it is the inventory the security tests hold the routes to:
 *   - tests/security/route-inventory.test.ts fails when a route of the Express app has no rule here, or a rule
 *     names a route that no longer exists;
 *   - tests/security/permission-matrix.test.ts drives anonymous / outsider / collaborator / role requests over
 *     every route from this table.
 * When you add a route, add its rule here in the same change.
 *
 * Rule meanings:
 *   'public'        no session needed (health, sign-in, sign-out)
 *   'signed-in'     any signed-in user; the handler filters what it returns to what the user may see
 *   'session'       a signed-in user with a cookie session: a personal API token gets 403 (managing tokens, password)
 *   { study: A }    requireStudy(…, A) on the study the route's entity belongs to: 404 when the user may not see
 *                   the study, 403 when they may see but not do A
 *   { global: A }   requireCan(user, A): 403 when the user's roles do not allow A
 *   'share-token'   no session; the signed, revocable share token in the path is the permission
 *   'invite-token'  no session; the single-use invitation token in the path is the permission
 */
import type { GlobalAction, StudyAction } from './policy.js';

export type Rule = 'public' | 'signed-in' | 'session' | { study: StudyAction } | { global: GlobalAction } | 'share-token' | 'invite-token';

export const ROUTE_RULES: Record<string, Rule> = {
  // app.ts
  'GET /api/health': 'public',

  // auth.ts
  'POST /api/auth/login': 'public',
  'GET /api/auth/me': 'signed-in',
  'POST /api/auth/logout': 'public',
  'POST /api/auth/password': 'session',
  'GET /api/auth/invitations/:token': 'invite-token',
  'POST /api/auth/invitations/:token/accept': 'invite-token',

  // people.ts
  'GET /api/users': { global: 'manage_users' },
  'POST /api/users': { global: 'manage_users' },
  'POST /api/users/:id/invite': { global: 'manage_users' },
  'PATCH /api/users/:id': { global: 'manage_users' },
  'GET /api/labs': 'signed-in', // managers see every lab, others their own
  'POST /api/labs': { global: 'manage_users' },
  'PATCH /api/labs/:id': { global: 'manage_users' },
  'DELETE /api/labs/:id': { global: 'manage_users' },
  'PUT /api/labs/:id/members/:userId': { global: 'manage_users' },
  'DELETE /api/labs/:id/members/:userId': { global: 'manage_users' },

  // studies.ts
  'GET /api/studies': 'signed-in', // filtered to readable studies
  'POST /api/studies': { global: 'create_study' },
  'GET /api/studies/:studyId': { study: 'read' },
  'PATCH /api/studies/:studyId': { study: 'edit_structure' },
  'DELETE /api/studies/:studyId': { study: 'delete' },
  'POST /api/studies/:studyId/conditions': { study: 'edit_structure' },
  'PATCH /api/conditions/:id': { study: 'edit_structure' },
  'DELETE /api/conditions/:id': { study: 'edit_structure' },
  'POST /api/conditions/:id/coverslips': { study: 'add_coverslips' },
  'PATCH /api/coverslips/:id': { study: 'edit_structure' },
  'DELETE /api/coverslips/:id': { study: 'edit_structure' },
  'POST /api/studies/:studyId/reorder': { study: 'edit_structure' },

  // sample-sheet.ts
  'POST /api/studies/:id/sample-sheet/check': { study: 'edit_images' },
  'POST /api/studies/:id/sample-sheet/apply': { study: 'edit_images' },

  // fields.ts
  'POST /api/coverslips/:id/fields': { study: 'edit_images' },
  'GET /api/coverslips/:id/fields': { study: 'read' },
  'GET /api/studies/:studyId/fields': { study: 'read' },
  'GET /api/fields/:id': { study: 'read' },
  'DELETE /api/fields/:id': { study: 'edit_images' },
  'PUT /api/fields/:id/instrument': { study: 'edit_images' },
  'PUT /api/fields/:id/pixel-size': { study: 'edit_images' },
  'PUT /api/fields/:id/z-step': { study: 'edit_images' },
  'GET /api/fields/:id/preview.png': { study: 'read' },
  'GET /api/fields/:id/pixels': { study: 'read' },
  'GET /api/fields/:id/shift': { study: 'read' },

  // cells.ts
  'GET /api/fields/:id/cells': { study: 'read' },
  'POST /api/fields/:id/cells': { study: 'edit_images' },
  'PATCH /api/cells/:id': { study: 'edit_images' },
  'DELETE /api/cells/:id': { study: 'edit_images' },
  'POST /api/fields/:id/cells/import': { study: 'edit_images' },
  'POST /api/fields/:id/cells/auto': { study: 'edit_images' },
  'GET /api/fields/:id/cells.geojson': { study: 'read' },
  'POST /api/fields/:id/cells/geojson': { study: 'edit_images' },
  'GET /api/fields/:id/cells/labels.tiff': { study: 'read' },

  // instruments.ts: instruments and calibrations are facility-wide, not study-scoped
  'GET /api/instruments': { global: 'read_instruments' },
  'POST /api/instruments': { global: 'manage_instruments' },
  'GET /api/instruments/:id': { global: 'read_instruments' },
  'POST /api/instruments/:id/calibrations': { global: 'propose_calibration' },
  'GET /api/calibrations/:id': { global: 'read_instruments' },
  'PATCH /api/calibrations/:id': { global: 'propose_calibration' }, // plus: proposer or facility manager
  'POST /api/calibrations/:id/submit': { global: 'propose_calibration' }, // plus: proposer or facility manager
  'POST /api/calibrations/:id/measure-shift': { global: 'propose_calibration' }, // plus: proposer or facility manager, and read access to the field
  'POST /api/calibrations/:id/measure-bleed': { global: 'propose_calibration' }, // plus: proposer or facility manager, and read access to the fields
  'POST /api/calibrations/:id/approve': { global: 'review_calibration' },
  'POST /api/calibrations/:id/return': { global: 'review_calibration' },
  'POST /api/calibrations/:id/retire': { global: 'review_calibration' },

  // recipes.ts: recipes are facility-wide, not study-scoped
  'GET /api/recipes': { global: 'read_recipes' },
  'POST /api/recipes': { global: 'propose_recipe' },
  'GET /api/recipes/:id': { global: 'read_recipes' },
  'GET /api/recipes/:id/diff/:otherId': { global: 'read_recipes' },
  'PATCH /api/recipes/:id': { global: 'propose_recipe' }, // plus: proposer or facility manager
  'POST /api/recipes/:id/versions': { global: 'propose_recipe' },
  'POST /api/recipes/:id/submit': { global: 'propose_recipe' }, // plus: proposer or facility manager
  'POST /api/recipes/:id/approve': { global: 'review_recipe' },
  'POST /api/recipes/:id/return': { global: 'review_recipe' },
  'POST /api/recipes/:id/retire': { global: 'review_recipe' },

  // runs.ts
  'POST /api/runs': { study: 'run' }, // the study of the scope in the body
  'POST /api/runs/check': { study: 'run' }, // as POST /api/runs: the pre-run check of the same body
  'GET /api/runs': 'signed-in', // filtered to readable studies; ?studyId= checks 'read'
  'GET /api/runs/:id': { study: 'read' },
  'GET /api/runs/:id/fields/:fieldId/spots': { study: 'read' }, // as the run's measurements
  'GET /api/runs/:id/measurements': { study: 'read' },
  'GET /api/runs/:id/measurements.csv': { study: 'read' },

  // cell-table.ts
  'GET /api/studies/:studyId/measurement-sources': { study: 'read' },
  'GET /api/studies/:studyId/cell-table': { study: 'read' },
  'GET /api/studies/:studyId/cells.csv': { study: 'read' },
  'POST /api/cells/:cellId/exclusion': { study: 'exclude' },
  'DELETE /api/cells/:cellId/exclusion': { study: 'exclude' },
  'GET /api/cells/:cellId/exclusion-history': { study: 'read' },

  // compare.ts
  'GET /api/studies/:studyId/compare': { study: 'read' },
  'GET /api/studies/:studyId/compare/coverslips.csv': { study: 'read' },
  'GET /api/studies/:studyId/compare/cells.csv': { study: 'read' },

  // reports.ts
  'GET /api/studies/:studyId/reports': { study: 'read' },
  'POST /api/studies/:studyId/reports': { study: 'report' },
  'GET /api/reports/:id': { study: 'read' },
  'GET /api/reports/:id/csv/:table': { study: 'read' },

  // shares.ts
  'GET /api/reports/:id/shares': { study: 'report' },
  'POST /api/reports/:id/shares': { study: 'report' },
  'POST /api/shares/:id/revoke': { study: 'report' },
  'POST /api/shares/:id/resend': { study: 'report' },
  'GET /api/shared/:token': 'share-token',
  'GET /api/shared/:token/csv/:table': 'share-token',

  // outbox.ts
  'GET /api/outbox': { global: 'read_outbox' },
  'GET /api/outbox/:id': { global: 'read_outbox' },

  // tokens.ts: the caller's own tokens
  'GET /api/tokens': 'session',
  'POST /api/tokens': 'session',
  'DELETE /api/tokens/:id': 'session',

  // notifications.ts: the caller's own e-mail choices
  'GET /api/notifications': 'signed-in',
  'PUT /api/notifications': 'signed-in',

  // usage.ts
  'GET /api/usage': { global: 'read_usage' },
  'GET /api/usage.csv': { global: 'read_usage' },

  // api-reference.ts
  'GET /api/openapi.json': 'signed-in',
};

/** Rules that let a request through without a session. */
export const isOpen = (r: Rule) => r === 'public' || r === 'share-token' || r === 'invite-token';
