/**
 * CI gates on a comparison: `region/metric:allowance`, the allowed worsening in the
 * metric's unit (percentage points for % metrics), judged per compared configuration.
 * A gate may name a depth band of the region: `known@2-4m/depth_over5pct:1`, and a
 * camera-fault condition after `~`: `visible~noise=4/over2px:1` judges only the
 * configurations under that condition (without one, every condition is judged).
 */
import { CLEAN, parseConditionName } from '../conditions/spec.js';
import { ALL_BANDS, REGION_IDS } from '../core/regions.js';
import { MASK_NAME_PATTERN } from '../dataset/manifest.js';
import { UsageError } from '../core/errors.js';
import { findMetric, metricsOf, type MetricSet } from '../metrics/catalogue.js';
import type { Comparison } from './compare.js';
import { unitsNeeded } from './power.js';

export interface Gate {
  region: string;
  /** `all` (the whole region) or a depth band's label. */
  band: string;
  /** Only configurations under this condition (`noise=4`, `clean`); absent = every condition. */
  condition?: string;
  metric: string;
  /** Allowed worsening in the metric's unit (percentage points for % metrics). */
  allowance: number;
  /** Where the gate came from (for messages). */
  source: string;
}

/** Parse `region/metric:allowance`; unknown region or metric is a UsageError naming `option`. */
export function parseGate(text: string, set: MetricSet, option = '--gate'): Gate {
  const m = /^([^/\s]+)\/([^:\s]+):([^\s]+)$/.exec(text.trim());
  if (!m) throw new UsageError(option, `"${text}" is not region/metric:allowance (e.g. visible/over2px:0.5)`);
  const [, slice, metric, allow] = m as unknown as [string, string, string, string];
  const tilde = slice.indexOf('~');
  const condition = tilde < 0 ? undefined : slice.slice(tilde + 1);
  if (condition !== undefined && condition !== CLEAN && !parseConditionName(condition)) {
    throw new UsageError(option, `"${condition}" in "${text}" is not a condition (clean, or kind=strength such as noise=4)`);
  }
  const { region, band } = parseSlice(tilde < 0 ? slice : slice.slice(0, tilde), text, option);
  if (!findMetric(set, metric)) {
    throw new UsageError(option, `unknown metric "${metric}" in "${text}" (metrics: ${metricsOf(set).map((x) => x.id).join(', ')})`);
  }
  const allowance = Number(allow);
  if (!Number.isFinite(allowance) || allowance < 0) throw new UsageError(option, `allowance in "${text}" must be a number >= 0`);
  return { region, band, ...(condition !== undefined ? { condition } : {}), metric, allowance, source: option };
}

/**
 * `region` or `region@band` (e.g. `visible`, `dock-edge`, `known@2-4m`): a built-in region
 * or a name a manifest may give its own, and a band label as the tables write it.
 */
export function parseSlice(slice: string, text: string, option: string): { region: string; band: string } {
  const at = slice.indexOf('@');
  const region = at < 0 ? slice : slice.slice(0, at);
  const band = at < 0 ? ALL_BANDS : slice.slice(at + 1);
  if (!(REGION_IDS as readonly string[]).includes(region) && !MASK_NAME_PATTERN.test(region)) {
    throw new UsageError(option, `unknown region "${region}" in "${text}" (regions: ${REGION_IDS.join(', ')}, or a dataset's own)`);
  }
  if (band !== ALL_BANDS && !/^\d+(\.\d+)?(-\d+(\.\d+)?m|m\+)$/.test(band)) {
    throw new UsageError(option, `"${band}" in "${text}" is not a depth band (e.g. 2-4m, 8m+, or all)`);
  }
  return { region, band };
}

/**
 * A gate file: JSON `{ "gates": [ "visible/over2px:0.5", { "region": "known", "metric": "epe", "allowance": 0.05 } ] }`
 * or a bare array of the same entries.
 */
export function parseGateFile(text: string, file: string, set: MetricSet): Gate[] {
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch {
    throw new UsageError('--gate-file', `${file} is not valid JSON`);
  }
  const list = Array.isArray(json) ? json : (json as { gates?: unknown })?.gates;
  if (!Array.isArray(list)) throw new UsageError('--gate-file', `${file} must hold an array of gates or { "gates": [...] }`);
  return list.map((g, i) => {
    const where = `--gate-file ${file} [${i}]`;
    if (typeof g === 'string') return parseGate(g, set, where);
    if (g && typeof g === 'object') {
      const o = g as { region?: unknown; band?: unknown; condition?: unknown; metric?: unknown; allowance?: unknown };
      const band = o.band === undefined || o.band === ALL_BANDS ? '' : `@${String(o.band)}`;
      const condition = o.condition === undefined ? '' : `~${String(o.condition)}`;
      return parseGate(`${String(o.region)}${band}${condition}/${String(o.metric)}:${String(o.allowance)}`, set, where);
    }
    throw new UsageError(where, 'a gate is a string region/metric:allowance or an object { region, metric, allowance }');
  });
}

export interface GateOutcome {
  gate: Gate;
  label: string;
  pass: boolean;
  worsening: number | null;
  /** Upper bound of the worsening's interval (strict mode judges this). */
  upper: number | null;
  reason: string;
  /** The smallest change the compared units can tell from noise (power.ts), null when fewer than two. */
  smallest: number | null;
  /** Units (pairs or groups) that would make the allowance detectable; null when it cannot be said. */
  unitsNeeded: number | null;
  /** The allowance is below the smallest detectable change: the gate passes or fails largely by chance. */
  belowNoise: boolean;
}

/**
 * Judge gates on every compared configuration.
 * Default: fail when the mean worsening exceeds the allowance.
 * Strict (non-inferiority): fail unless the interval's upper bound of the worsening is
 * within the allowance. No figure on any common pair -> fail (nothing shows it holds).
 */
export function evaluateGates(c: Comparison, gates: readonly Gate[], strict: boolean): GateOutcome[] {
  const out: GateOutcome[] = [];
  const alpha = 1 - c.level;
  for (const g of gates) {
    if (g.condition !== undefined && !c.configs.some((cfg) => cfg.condition === g.condition)) {
      const have = [...new Set(c.configs.map((cfg) => cfg.condition))];
      throw new UsageError(g.source, `condition ${g.condition} is not in the compared runs (they have ${have.join(', ')})`);
    }
  }
  for (const cfg of c.configs) {
    for (const g of gates) {
      if (g.condition !== undefined && g.condition !== cfg.condition) continue;
      const d = cfg.deltas.find((x) => x.region === g.region && x.band === g.band && x.metric === g.metric);
      if (!d) {
        const have = [...new Set(cfg.deltas.map((x) => (x.band === ALL_BANDS ? x.region : `${x.region}@${x.band}`)))];
        throw new UsageError(g.source, `${g.region}${g.band === ALL_BANDS ? '' : `@${g.band}`} is not in the compared runs (they have ${have.slice(0, 12).join(', ')}${have.length > 12 ? ', ...' : ''})`);
      }
      const w = d.worsening;
      const upper = d.worseningCi ? d.worseningCi.hi : null;
      let pass: boolean;
      let reason: string;
      if (w === null) {
        pass = false;
        reason = 'no pair has this figure in both runs';
      } else if (strict) {
        if (upper === null) {
          pass = false;
          reason = `no interval (${d.units} ${d.unit}${d.units === 1 ? '' : 's'}), non-inferiority cannot be shown`;
        } else {
          pass = upper <= g.allowance;
          reason = `upper bound of worsening ${fmt(upper)} ${pass ? '<=' : '>'} allowance ${fmt(g.allowance)}`;
        }
      } else {
        pass = w <= g.allowance;
        reason = `worsening ${fmt(w)} ${pass ? '<=' : '>'} allowance ${fmt(g.allowance)}`;
      }
      const smallest = d.detect ? d.detect.smallest : null;
      out.push({
        gate: g,
        label: cfg.label,
        pass,
        worsening: w,
        upper,
        reason,
        smallest,
        unitsNeeded: d.detect ? unitsNeeded(d.detect.sd, g.allowance, alpha) : null,
        belowNoise: smallest !== null && g.allowance < smallest,
      });
    }
  }
  return out;
}

function fmt(x: number): string {
  return Number.isInteger(x) ? String(x) : x.toPrecision(4).replace(/\.?0+$/, '');
}
