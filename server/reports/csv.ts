/**
 * CSV downloads of a report's tables (RFC 4180: comma separated, CRLF line ends, fields quoted when they hold
 * a comma, quote or line break; quotes doubled). Missing values are empty fields. Cells whose text starts with
 * = + - @ (tab or CR) are prefixed with ' so spreadsheet programs do not evaluate them (OWASP "CSV injection",
 * common practice); one writer for every CSV: server/compare/csv.ts.
 */
import { labelOf } from '../../shared/coefficients.js';
import type { CsvTable, ReportSnapshot } from '../../shared/schemas/reports.js';
import { toCsv } from '../compare/csv.js';

export function reportCsv(s: ReportSnapshot, table: CsvTable): string {
  const condName = new Map(s.conditions.map((c) => [c.id, c.name]));
  const slipName = new Map(s.conditions.flatMap((c) => c.coverslips.map((x) => [x.id, x.name] as const)));
  const fieldName = new Map(s.fields.map((f) => [f.id, f.name]));
  switch (table) {
    case 'cells':
      return toCsv(
        ['condition', 'coverslip', 'field', 'cell', 'cell_id', 'excluded', 'exclusion_reason', 'run_id', 'pixels', ...s.coefficients, 'threshold1', 'threshold2', 'threshold_method', 'background1', 'background2', 'saturated_fraction1', 'saturated_fraction2', 'randomization_p'],
        s.cells.map((c) => [
          condName.get(c.conditionId),
          slipName.get(c.coverslipId),
          fieldName.get(c.fieldId),
          c.name,
          c.cellId,
          c.excluded,
          c.exclusionReason,
          c.runId,
          c.pixels,
          ...s.coefficients.map((k) => c.values[k]),
          c.threshold1,
          c.threshold2,
          c.thresholdMethod,
          c.background1,
          c.background2,
          c.saturatedFraction1,
          c.saturatedFraction2,
          c.randomizationP,
        ]),
      );
    case 'coverslips':
      return toCsv(
        ['coefficient', 'condition', 'coverslip', 'cells', 'mean', 'median'],
        s.coverslipSummaries.map((x) => [x.coefficient, condName.get(x.conditionId), x.coverslipName, x.n, x.mean, x.median]),
      );
    case 'conditions':
      return toCsv(
        ['coefficient', 'condition', 'cells', 'coverslips', 'mean_of_coverslip_means', 'sd_of_coverslip_means', 'median_of_cells', 'min', 'max'],
        s.conditionSummaries.map((x) => [x.coefficient, x.conditionName, x.cells, x.coverslips, x.mean, x.sd, x.median, x.min, x.max]),
      );
    case 'statistics':
      return toCsv(
        ['coefficient', 'label', 'test', 'statistic', 'df', 'p', 'effect', 'effect_label', 'ci_low', 'ci_high', 'result'],
        s.statistics.map((x) => [x.coefficient, labelOf(x.coefficient), x.test, x.statistic, x.df, x.p, x.effect, x.effectLabel, x.ciLow, x.ciHigh, x.sentence]),
      );
    case 'exclusions':
      return toCsv(
        ['condition', 'coverslip', 'field', 'cell', 'cell_id', 'reason', 'excluded_by', 'excluded_at'],
        s.exclusions.map((x) => [x.conditionName, x.coverslipName, x.fieldName, x.cellName, x.cellId, x.reason, x.excludedBy, x.excludedAt]),
      );
  }
}
