/**
 * breaking.csv (runs with conditions): one row per configuration, dataset and condition
 * kind. Columns: matcher, dataset, kind, unit, rule (region/metric:amount), pairs,
 * breaking (the weakest breaking strength; empty when no level tried breaks),
 * breaking_lo, breaking_hi (its interval over pairs; empty = beyond the strongest level
 * tried), holds (`breaks` or `beyond`), worsening (each level's mean worsening over
 * clean, `strength:value` separated by spaces, weak to strong). See src/stats/breaking.ts.
 */
import { conditionKind } from '../conditions/spec.js';
import { breakingRuleText, type BreakingPoint } from '../stats/breaking.js';
import { csvText, type CsvCell } from './csv.js';
import { tableNumber } from './pairs-csv.js';

export const BREAKING_CSV_HEADER = ['matcher', 'dataset', 'kind', 'unit', 'rule', 'pairs', 'breaking', 'breaking_lo', 'breaking_hi', 'holds', 'worsening'];

export function breakingCsvText(points: readonly BreakingPoint[]): string {
  const rows: CsvCell[][] = points.map((p) => [
    p.matcher,
    p.dataset,
    p.kind,
    conditionKind(p.kind)?.unit ?? '',
    breakingRuleText(p.rule),
    p.pairs,
    p.strength,
    p.lo,
    p.hi,
    p.strength === null ? 'beyond' : 'breaks',
    p.levels.map((l) => `${l.strength}:${l.worsening === null ? '' : String(tableNumber(l.worsening))}`).join(' '),
  ]);
  return csvText(BREAKING_CSV_HEADER, rows);
}
