/**
 * A run's measurements for scripts (GET /api/runs/:id/measurements and …/measurements.csv): keyset pages in
 * measurement-id order, each row with the ids and names of its cell, field, coverslip and condition, every
 * registry measure (shared/coefficients.ts, by its SQL column), the per-cell inputs and the provenance.
 * Shapes: shared/schemas/runs.ts (RunMeasurement, MEASUREMENT_CSV_COLUMNS).
 */
import type { Db } from '../db/client.js';
import { COEFFICIENTS } from '../../shared/coefficients.js';
import { MEASUREMENT_INPUT_KEYS, type MeasurementProvenance, type RunMeasurement } from '../../shared/schemas/runs.js';
import { COLUMN_SQL } from '../compare/source.js';

const SELECT = `SELECT m.id AS measurementId, m.run_id AS runId, c.id AS cellId, c.name AS cell, f.id AS fieldId, f.name AS field,
  cs.id AS coverslipId, cs.name AS coverslip, cs.replicate AS replicate, cd.id AS conditionId, cd.name AS condition,
  ${COEFFICIENTS.map((e) => `m.${e.column} AS ${e.key}`).join(', ')},
  ${MEASUREMENT_INPUT_KEYS.map((k) => `${COLUMN_SQL[k]} AS ${k}`).join(', ')},
  m.threshold_method AS thresholdMethod, m.provisional AS provisional, c.excluded AS excluded, m.provenance AS provenance
FROM measurements m
  JOIN cells c ON c.id = m.cell_id AND c.deleted_at IS NULL
  JOIN fields f ON f.id = m.field_id
  JOIN coverslips cs ON cs.id = f.coverslip_id
  JOIN conditions cd ON cd.id = cs.condition_id
WHERE m.run_id = ? AND m.id > ?
ORDER BY m.id
LIMIT ?`;

/** One page after `cursor` (a measurement id; 0 for the first page); `nextCursor` null on the last page. */
export function measurementPage(db: Db, runId: number, cursor: number, limit: number): { rows: RunMeasurement[]; nextCursor: number | null } {
  const raw = db.$client.prepare(SELECT).all(runId, cursor, limit + 1) as Record<string, unknown>[];
  const more = raw.length > limit;
  const rows = raw.slice(0, limit).map(
    (r) => ({ ...r, provisional: !!r.provisional, excluded: !!r.excluded, provenance: JSON.parse(String(r.provenance)) as MeasurementProvenance }) as RunMeasurement,
  );
  return { rows, nextCursor: more ? rows[rows.length - 1].measurementId : null };
}

/** A row as the CSV's columns (MEASUREMENT_CSV_COLUMNS): provenance flattened to its main parts. */
export function csvValues(r: RunMeasurement, columns: readonly string[]): unknown[] {
  const p = r.provenance;
  const flat: Record<string, unknown> = {
    ...r,
    recipeId: p.recipeId,
    recipeVersion: p.recipeVersion,
    engineVersion: p.engineVersion,
    seed: p.seed,
    z: p.z,
    input1Sha256: p.inputSha256?.[0],
    input2Sha256: p.inputSha256?.[1],
    computedAt: p.computedAt,
  };
  return columns.map((c) => flat[c]);
}
