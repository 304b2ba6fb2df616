import type { CsvTable } from '@shared/schemas/reports';

/** GET /api/reports/:id/csv/:table (signed in) */
export const reportCsvUrl = (reportId: number, table: CsvTable) => `/api/reports/${reportId}/csv/${table}`;
/** GET /api/shared/:token/csv/:table (share link) */
export const sharedCsvUrl = (token: string, table: CsvTable) => `/api/shared/${encodeURIComponent(token)}/csv/${table}`;
