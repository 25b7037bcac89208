/**
 * The compact table printed at the end of a run: one line per configuration and
 * dataset with key figures (means over pairs) for the `known` and `visible` regions.
 * A pure function of the summary rows.
 */
import type { SummaryRow } from '../stats/aggregate.js';
import { thresholdName } from '../metrics/types.js';
import { keyThreshold } from '../metrics/catalogue.js';
import { byNatural } from '../core/order.js';
import { ALL_BANDS } from '../core/regions.js';
import { CLEAN, compareConditions, conditionKind, configLabel, CONDITION_KINDS } from '../conditions/spec.js';
import { breakingCell, breakingRuleText, type BreakingPoint } from '../stats/breaking.js';
import { DEFAULT_USABLE_RULE, usableCell, usableRuleText } from '../stats/usable-range.js';

function fmt(v: number | null | undefined, digits: number): string {
  return v === null || v === undefined || !Number.isFinite(v) ? '-' : v.toFixed(digits);
}

/** Align columns: text left, numbers right. */
export function alignColumns(header: string[], rows: string[][], rightAligned: boolean[]): string {
  const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => r[i].length)));
  const line = (cells: string[]): string =>
    cells
      .map((c, i) => (rightAligned[i] ? c.padStart(widths[i]) : c.padEnd(widths[i])))
      .join('  ')
      .trimEnd();
  return [line(header), line(widths.map((w) => '-'.repeat(w))), ...rows.map(line)].join('\n') + '\n';
}

export function consoleTable(rows: readonly SummaryRow[], thresholds: readonly number[]): string {
  const t = keyThreshold(thresholds);
  const rate = thresholdName(t);
  const header = ['matcher', 'dataset', 'pairs', 'failed', 'known cov%', 'known epe', `known ${rate}`, 'visible cov%', 'visible epe', `visible ${rate}`, 'ms/pair'];
  const out: string[][] = [];
  const cells = new Map<string, { known?: SummaryRow; visible?: SummaryRow }>();
  for (const r of rows) {
    if (r.tag !== null || r.band !== ALL_BANDS || (r.region !== 'known' && r.region !== 'visible')) continue;
    const key = `${configLabel(r)}\u0000${r.dataset}`;
    const c = cells.get(key) ?? {};
    c[r.region] = r;
    cells.set(key, c);
  }
  const m = (row: SummaryRow | undefined, id: string): number | null => row?.metrics[id]?.mean ?? null;
  // Ranked by the known region's bad-pixel rate: a missing answer counts as an error there, so silence is not rewarded.
  const ranked = [...cells.values()].sort((x, y) => {
    const a = m(x.known, rate);
    const b = m(y.known, rate);
    const any = (c: typeof x): SummaryRow => (c.known ?? c.visible)!;
    const byRate = a === null || b === null ? (a === null ? 1 : 0) - (b === null ? 1 : 0) : a - b;
    const byCondition = compareConditions(any(x).condition, any(y).condition);
    return byNatural(any(x).dataset, any(y).dataset) || byCondition || byRate || byNatural(any(x).matcher, any(y).matcher);
  });
  const usable = ranked.some((c) => c.known?.usable);
  if (usable) header.push('known usable m');
  const conditions = ranked.some((c) => (c.known ?? c.visible)!.condition !== CLEAN);
  if (conditions) header.splice(1, 0, 'condition');
  for (const { known, visible } of ranked) {
    const any = (known ?? visible)!;
    const row = [
      any.matcher,
      any.dataset,
      String(any.n_jobs),
      String(any.n_failed),
      fmt(m(known, 'coverage'), 1),
      fmt(m(known, 'epe'), 3),
      fmt(m(known, rate), 2),
      fmt(m(visible, 'coverage'), 1),
      fmt(m(visible, 'epe'), 3),
      fmt(m(visible, rate), 2),
      fmt(m(known, 'time_ms'), 1),
    ];
    if (usable) row.push(known?.usable ? usableCell(known.usable) : '-');
    if (conditions) row.splice(1, 0, any.condition);
    out.push(row);
  }
  const rule = ranked.find((c) => c.known?.usable)?.known?.usable?.rule ?? DEFAULT_USABLE_RULE;
  const usableNote = usable
    ? `known usable m: the distance up to which ${usableRuleText(rule)} holds on known pixels, [95% interval over pairs]; >: holds to the farthest truth; <: fails at the nearest\n`
    : '';
  return alignColumns(header, out, header.map((_, i) => i >= (conditions ? 3 : 2))) + `sorted by ${conditions ? 'condition, then ' : ''}known ${rate}, lowest first (pixels without an answer count as errors)\n` + usableNote;
}

/** Breaking points as printed after the run's table: one line per configuration and dataset, one column per condition kind. */
export function breakingTable(points: readonly BreakingPoint[]): string {
  if (!points.length) return '';
  const kinds = CONDITION_KINDS.map((k) => k.id).filter((id) => points.some((p) => p.kind === id));
  const rows = new Map<string, string[]>();
  for (const p of points) {
    const key = `${p.matcher}\u0000${p.dataset}`;
    const row = rows.get(key) ?? [p.matcher, p.dataset, ...kinds.map(() => '-')];
    const bound = (v: number | null): string => (v === null ? 'beyond' : String(v));
    row[2 + kinds.indexOf(p.kind)] = `${breakingCell(p)}${p.lo !== null || p.hi !== null ? ` [${bound(p.lo)}, ${bound(p.hi)}]` : ''}`;
    rows.set(key, row);
  }
  const header = ['matcher', 'dataset', ...kinds.map((k) => `${k} (${conditionKind(k)!.unit})`)];
  const rule = points[0].rule;
  return (
    `\nbreaking points: the weakest strength at which ${breakingRuleText(rule).replace(/:[^:]*$/, '')} worsens by more than ${rule.amount} over clean [95% interval over pairs]; beyond: no level tried breaks\n` +
    alignColumns(header, [...rows.values()], header.map((_, i) => i >= 2))
  );
}
