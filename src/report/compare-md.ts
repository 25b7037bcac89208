/**
 * Text renderings of a run comparison: compare.md (Markdown for a pull-request comment)
 * and the console table. Our own layout: a verdict line, the gates, a short table of
 * headline figures, the pairs that changed most, and the full table folded away.
 */
import type { Comparison, ConfigComparison, MetricDelta } from '../stats/compare.js';
import { ALL_BANDS, sliceKey } from '../core/regions.js';
import type { GateOutcome } from '../stats/gates.js';
import { entryOf, thresholdName } from '../metrics/catalogue.js';

/** Escape text for a Markdown table cell: HTML-significant characters, pipes, backticks, newlines. */
export function mdCell(s: string): string {
  return s
    .replace(/&/g, '&amp;')
    .replace(/</g, '&lt;')
    .replace(/>/g, '&gt;')
    .replace(/\|/g, '\\|')
    .replace(/`/g, '\\`')
    .replace(/[\r\n\t]+/g, ' ')
    .replace(/^([#>*_~=-])/, '\\$1');
}

export function fmtNum(x: number | null | undefined, signed = false): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return '–';
  const a = Math.abs(x);
  let s: string;
  if (a === 0) s = '0';
  else if (a >= 1000) s = x.toFixed(0);
  else if (a >= 10) s = x.toFixed(2);
  else if (a >= 0.001) s = x.toFixed(3);
  else s = x.toPrecision(2);
  return signed && x > 0 ? `+${s}` : s;
}

export function fmtP(p: number | null): string {
  if (p === null || !Number.isFinite(p)) return '–';
  return p < 0.001 ? '<0.001' : p.toFixed(3);
}

function metricLabel(metric: string): string {
  const unit = entryOf(metric)?.unit;
  const u = unit === undefined || unit === 'fraction' ? '' : unit;
  const name = metric === 'bias' ? '|bias|' : metric;
  return u ? `${name} (${u})` : name;
}

/** Headline rows: coverage, epe and the rates on known and visible, plus every gated row. */
export function headlineRows(cfg: ConfigComparison, thresholds: readonly number[], gates: readonly GateOutcome[]): MetricDelta[] {
  const want = new Set<string>();
  for (const r of ['known', 'visible']) for (const m of ['coverage', 'epe', ...thresholds.map(thresholdName)]) want.add(`${r}/${m}`);
  want.add('known/time_ms');
  for (const g of gates) want.add(`${sliceKey(g.gate.region, g.gate.band)}/${g.gate.metric}`);
  return cfg.deltas.filter((d) => want.has(`${sliceKey(d.region, d.band)}/${d.metric}`) && d.n > 0);
}

/** Every row with data; cost figures only once (under `known`), they do not depend on the region. */
export function allRows(cfg: ConfigComparison): MetricDelta[] {
  const perJob = (id: string): boolean => {
    const e = entryOf(id);
    return e !== undefined && 'job' in e.read;
  };
  return cfg.deltas.filter((d) => d.n > 0 && (!perJob(d.metric) || (d.region === 'known' && d.band === ALL_BANDS)));
}

/**
 * Fewest units (pairs or groups) for a reading: below 6 the exact sign-flip test cannot
 * reach p < 0.05 (its smallest two-sided p is 2 / 2^n), and a bootstrap interval over so
 * few units is no more than their range.
 */
export const MIN_UNITS_TO_CALL = 6;

/**
 * The reading of a change, by one rule: it is called (worse or better) when its interval
 * excludes zero, and "no clear change" otherwise. The p-value is shown beside it for
 * reference and does not change the reading.
 */
export function verdict(d: MetricDelta): string {
  if (d.worsening === null || d.worsening === 0) return 'same';
  const ci = d.worseningCi;
  if (ci === null) return 'no interval';
  if (d.units < MIN_UNITS_TO_CALL) return 'too few pairs to tell';
  if (ci.lo > 0) return 'worse';
  if (ci.hi < 0) return 'better';
  return 'no clear change';
}

/** The decision rule in words, for compare.md. */
export function decisionRule(level: number): string {
  const pct = Math.round(level * 100);
  return `A change is read as worse or better when its ${pct} % interval excludes zero, and as "no clear change" when it contains zero; with fewer than ${MIN_UNITS_TO_CALL} pairs (or groups) it is not read at all. The p-value is shown for reference only and does not change the reading.`;
}

function deltaTable(rows: MetricDelta[], level: number): string[] {
  const pct = Math.round(level * 100);
  const out = [`| region | metric | baseline | candidate | change | ${pct} % interval | p | pairs | reading |`, '|---|---|--:|--:|--:|--:|--:|--:|---|'];
  for (const d of rows) {
    const ci = d.changeCi ? `${fmtNum(d.changeCi.lo, true)} … ${fmtNum(d.changeCi.hi, true)}` : '–';
    const units = d.unit === 'group' ? `${d.n} (${d.units} groups)` : String(d.n);
    out.push(`| ${mdCell(sliceKey(d.region, d.band))} | ${mdCell(metricLabel(d.metric))} | ${fmtNum(d.base)} | ${fmtNum(d.cand)} | ${fmtNum(d.change, true)} | ${ci} | ${fmtP(d.p)} | ${units} | ${verdict(d)} |`);
  }
  return out;
}

/** One run as compare.md names it. */
export interface RunMeta {
  name: string;
  dir: string;
  /** Git commit of the tool when the run was made (null outside a checkout), and whether the tree had changes. */
  commit: string | null;
  dirty: boolean;
  started: string;
  /** Jobs served from the result cache, per configuration label. */
  cached: Readonly<Record<string, number>>;
}

export interface CompareMeta {
  baseline: RunMeta;
  candidate: RunMeta;
  strict: boolean;
  /** What changed per compared configuration (keyed by ConfigComparison.label). */
  changes: Readonly<Record<string, readonly string[]>>;
  /** Settings in effect that change what is compared or how (e.g. mismatched datasets allowed). */
  overrides: readonly string[];
}

function runRows(meta: CompareMeta): string[] {
  const commit = (r: RunMeta): string => (r.commit === null ? '–' : `${r.commit.slice(0, 12)}${r.dirty ? ' (uncommitted changes)' : ''}`);
  const row = (what: string, f: (r: RunMeta) => string): string => `| ${what} | ${mdCell(f(meta.baseline))} | ${mdCell(f(meta.candidate))} |`;
  return ['| | baseline | candidate |', '|---|---|---|', row('run', (r) => r.name), row('folder', (r) => r.dir), row('git commit', commit), row('started', (r) => r.started), ''];
}

function gateRows(gates: readonly GateOutcome[]): string[] {
  if (!gates.length) return [];
  const L = ['| configuration | gate | worsening | allowance | smallest detectable | verdict | why |', '|---|---|--:|--:|--:|---|---|'];
  for (const g of gates) {
    const why = g.belowNoise
      ? `${g.reason}; the allowance is below the smallest change these pairs can detect, so a worsening near the allowance passes or fails by chance${g.unitsNeeded !== null ? ` (about ${g.unitsNeeded} pairs would make it detectable)` : ''}`
      : g.reason;
    L.push(`| ${mdCell(g.label)} | ${mdCell(sliceKey(g.gate.region, g.gate.band))}/${g.gate.metric} | ${fmtNum(g.worsening, true)} | ${fmtNum(g.gate.allowance)} | ${fmtNum(g.smallest)} | ${g.pass ? 'pass' : '**FAIL**'}${g.belowNoise ? ' ⚠' : ''} | ${mdCell(why)} |`);
  }
  L.push('');
  return L;
}

function notCompared(c: Comparison): string[] {
  const notes: string[] = [];
  if (c.configsOnlyInBase.length) notes.push(`only in the baseline: ${c.configsOnlyInBase.map(mdCell).join(', ')}`);
  if (c.configsOnlyInCand.length) notes.push(`only in the candidate: ${c.configsOnlyInCand.map(mdCell).join(', ')}`);
  if (c.pairsOnlyInBase.length) notes.push(`${c.pairsOnlyInBase.length} pair result(s) only in the baseline (e.g. ${mdCell(c.pairsOnlyInBase[0])})`);
  if (c.pairsOnlyInCand.length) notes.push(`${c.pairsOnlyInCand.length} pair result(s) only in the candidate (e.g. ${mdCell(c.pairsOnlyInCand[0])})`);
  return notes.length ? ['Not compared:', '', ...notes.map((n) => `- ${n}`), ''] : [];
}

function configSection(c: Comparison, cfg: ConfigComparison, gates: readonly GateOutcome[], meta: CompareMeta): string[] {
  const L = [`### ${mdCell(cfg.label)} — ${cfg.pairs} pairs`, ''];
  const changes = meta.changes[cfg.label] ?? [];
  L.push(changes.length ? 'What changed:' : 'What changed: nothing in the configuration (same matcher, version, parameters and code).', '');
  if (changes.length) L.push(...changes.map((x) => `- ${mdCell(x)}`), '');
  const cachedB = meta.baseline.cached[cfg.baseLabel] ?? 0;
  const cachedC = meta.candidate.cached[cfg.candLabel] ?? 0;
  if (cachedB || cachedC) {
    L.push(`Result cache: ${cachedB} baseline and ${cachedC} candidate job(s) were served from the cache; their time was not measured again, so time and memory means leave them out (as they leave out failed and timed-out jobs).`, '');
  }
  L.push(...deltaTable(headlineRows(cfg, c.thresholds, gates), c.level), '');
  if (cfg.statusChanges.length) {
    L.push('Status changed:', '');
    for (const s of cfg.statusChanges) {
      const msg = s.candStatus === 'failed' ? s.candError : s.baseError;
      L.push(`- ${mdCell(s.dataset)}/${mdCell(s.pair)}: ${s.baseStatus} → ${s.candStatus}${msg ? ` — ${mdCell(msg)}` : ''}`);
    }
    L.push('');
  }
  if (cfg.topChanges.length) {
    L.push(`Pairs that changed most (${c.headline.region}/${metricLabel(c.headline.metric)}):`, '');
    L.push('| pair | baseline | candidate | change |', '|---|--:|--:|--:|');
    for (const p of cfg.topChanges) L.push(`| ${mdCell(p.dataset)}/${mdCell(p.pair)} | ${fmtNum(p.base)} | ${fmtNum(p.cand)} | ${fmtNum(p.change, true)} |`);
    L.push('');
  }
  L.push('<details><summary>All figures</summary>', '', ...deltaTable(allRows(cfg), c.level), '', '</details>', '');
  return L;
}

export function compareMarkdown(c: Comparison, gates: readonly GateOutcome[], meta: CompareMeta): string {
  const failed = gates.filter((g) => !g.pass);
  const chance = gates.filter((g) => g.belowNoise).length;
  const head = gates.length === 0 ? 'no gates set' : failed.length === 0 ? `all ${gates.length} gate checks pass` : `${failed.length} of ${gates.length} gate checks FAIL`;
  const L: string[] = [`## Stereo accuracy: ${mdCell(meta.candidate.name)} against ${mdCell(meta.baseline.name)}`, ''];
  L.push(`**${head}**${meta.strict ? ' (strict: the interval of each worsening must stay within its allowance)' : ''}`, '');
  if (chance) L.push(`⚠ ${chance} gate check(s) have an allowance below the smallest change the data can detect: near the allowance they can only pass or fail by chance.`, '');
  L.push(...runRows(meta), ...gateRows(gates));
  if (meta.overrides.length) L.push('Overrides in effect:', '', ...meta.overrides.map((o) => `- ${mdCell(o)}`), '');
  L.push(...notCompared(c));
  for (const cfg of c.configs) L.push(...configSection(c, cfg, gates, meta));
  const pct = Math.round(c.level * 100);
  L.push(
    `<sub>change = mean over pairs of candidate − baseline (for |bias|: of the magnitudes); ${pct} % BCa bootstrap intervals, ${c.resamples} resamples of pairs (or groups); p = two-sided paired sign-flip permutation test. ${decisionRule(c.level)} Smallest detectable = (z(${1 - (1 - c.level) / 2}) + z(0.8)) × SD of the paired differences / √pairs: the change these pairs tell from noise at the ${pct} % level with 80 % power. Rates and coverage in percentage points. Accuracy on a dataset does not make a perception system safe; defer to the applicable functional-safety standards and qualified assessment.</sub>`,
  );
  return L.join('\n') + '\n';
}

/** Plain-text table for the terminal (same figures, aligned columns). */
export function compareConsole(c: Comparison, gates: readonly GateOutcome[], all: boolean): string {
  const L: string[] = [];
  const pad = (rows: string[][]): string[] => {
    const w = rows[0].map((_, i) => Math.max(...rows.map((r) => r[i].length)));
    return rows.map((r) => r.map((s, i) => (i < 2 ? s.padEnd(w[i]) : s.padStart(w[i]))).join('  ').trimEnd());
  };
  for (const x of c.configsOnlyInBase) L.push(`only in baseline:  ${x}`);
  for (const x of c.configsOnlyInCand) L.push(`only in candidate: ${x}`);
  if (c.pairsOnlyInBase.length) L.push(`${c.pairsOnlyInBase.length} pair result(s) only in baseline, e.g. ${c.pairsOnlyInBase[0]}`);
  if (c.pairsOnlyInCand.length) L.push(`${c.pairsOnlyInCand.length} pair result(s) only in candidate, e.g. ${c.pairsOnlyInCand[0]}`);
  for (const cfg of c.configs) {
    L.push('', `${cfg.label}  (${cfg.pairs} pairs)`);
    const rows = [['region', 'metric', 'baseline', 'candidate', 'change', `${Math.round(c.level * 100)}% interval`, 'p', 'pairs']];
    for (const d of all ? allRows(cfg) : headlineRows(cfg, c.thresholds, gates)) {
      rows.push([
        sliceKey(d.region, d.band),
        metricLabel(d.metric),
        fmtNum(d.base),
        fmtNum(d.cand),
        fmtNum(d.change, true),
        d.changeCi ? `[${fmtNum(d.changeCi.lo, true)}, ${fmtNum(d.changeCi.hi, true)}]` : '–',
        fmtP(d.p),
        d.unit === 'group' ? `${d.n}/${d.units}g` : String(d.n),
      ]);
    }
    L.push(...pad(rows).map((s) => `  ${s}`));
    for (const s of cfg.statusChanges) L.push(`  status changed: ${s.dataset}/${s.pair} ${s.baseStatus} -> ${s.candStatus}${(s.candStatus === 'failed' ? s.candError : s.baseError) ? `: ${s.candStatus === 'failed' ? s.candError : s.baseError}` : ''}`);
    if (cfg.topChanges.length) {
      L.push(`  changed most (${c.headline.region}/${c.headline.metric}): ` + cfg.topChanges.map((p) => `${p.dataset}/${p.pair} ${fmtNum(p.change, true)}`).join(', '));
    }
  }
  if (gates.length) {
    L.push('', 'gates:');
    for (const g of gates) L.push(`  ${g.pass ? 'pass' : 'FAIL'}  ${g.label}  ${sliceKey(g.gate.region, g.gate.band)}/${g.gate.metric}:${g.gate.allowance}  ${g.reason}${g.belowNoise ? `  (allowance below the smallest detectable change ${fmtNum(g.smallest)}: near it, chance decides)` : ''}`);
  }
  return L.join('\n') + '\n';
}
