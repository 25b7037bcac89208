/**
 * Breaking points on hand-made jobs whose answer is worked out by hand, and the
 * condition names they rest on. Values below come from the definitions in
 * src/stats/breaking.ts (our own) and src/conditions/spec.ts, computed by hand.
 */
import { describe, expect, it } from 'vitest';
import type { JobResult } from '../../src/core/score.js';
import { breakingCell, breakingPoints, parseBreakingRule } from '../../src/stats/breaking.js';
import { conditionList, configLabel, parseConditionSpec } from '../../src/conditions/spec.js';
import { UsageError } from '../../src/core/errors.js';
import { makeJob } from './fixtures.js';

const T = [1, 2];
const set = { thresholds: T, quantiles: [50, 68, 95] };

/** A job whose every pixel is off by `e` px: its epe is e. */
function job(pair: string, condition: string, e: number): JobResult {
  const j = makeJob({ pair, errors: { all: [e, e, e, e] } }, T);
  return condition === 'clean' ? j : { ...j, condition };
}

/** Four pairs; the epe per pair under each noise level. */
function jobs(worse: Record<string, number[]>): JobResult[] {
  const pairs = ['p1', 'p2', 'p3', 'p4'];
  const out = pairs.map((p) => job(p, 'clean', 0.5));
  for (const [c, w] of Object.entries(worse)) pairs.forEach((p, i) => out.push(job(p, c, 0.5 + w[i])));
  return out;
}

describe('breaking points', () => {
  it('is the weakest level whose mean worsening exceeds the amount; every draw agrees when pairs agree', () => {
    // Worsening of epe over clean: noise=2 0.2, noise=4 0.6, noise=8 1.5 on every pair; amount 0.5.
    const [p] = breakingPoints(jobs({ 'noise=8': [1.5, 1.5, 1.5, 1.5], 'noise=2': [0.2, 0.2, 0.2, 0.2], 'noise=4': [0.6, 0.6, 0.6, 0.6] }), set, parseBreakingRule('known/epe:0.5', set));
    expect(p.kind).toBe('noise');
    expect(p.levels.map((l) => l.strength)).toEqual([2, 4, 8]);
    expect(p.levels.map((l) => l.worsening)).toEqual([0.2, 0.6, 1.5].map((v) => expect.closeTo(v, 9)));
    expect([p.strength, p.lo, p.hi]).toEqual([4, 4, 4]);
  });

  it('widens its interval when one pair carries the change', () => {
    // noise=4: 0.2, 0.2, 0.2, 1.8 (mean 0.6 > 0.5: breaks at 4). A draw without p4 has mean
    // 0.2 and breaks at 8 instead: probability (3/4)^4 = 32 % > 2.5 %, so the upper bound is 8.
    const [p] = breakingPoints(jobs({ 'noise=4': [0.2, 0.2, 0.2, 1.8], 'noise=8': [1.5, 1.5, 1.5, 1.5] }), set, parseBreakingRule('known/epe:0.5', set));
    expect([p.strength, p.lo, p.hi]).toEqual([4, 4, 8]);
  });

  it('says beyond when no level breaks', () => {
    const [p] = breakingPoints(jobs({ 'noise=4': [0.6, 0.6, 0.6, 0.6], 'noise=8': [1.5, 1.5, 1.5, 1.5] }), set, parseBreakingRule('known/epe:2', set));
    expect(p.strength).toBeNull();
    expect([p.lo, p.hi]).toEqual([null, null]);
    expect(breakingCell(p)).toBe('beyond 8');
  });

  it('orders compression from high quality (weak) to low', () => {
    const [p] = breakingPoints(jobs({ 'jpeg=30': [1, 1, 1, 1], 'jpeg=90': [0.1, 0.1, 0.1, 0.1] }), set, parseBreakingRule('known/epe:0.5', set));
    expect(p.levels.map((l) => l.strength)).toEqual([90, 30]);
    expect(p.strength).toBe(30);
  });
});

describe('condition names', () => {
  it('lists clean first, kinds in catalogue order, levels weak to strong, each once', () => {
    expect(conditionList(['vshift=[1,-0.25,0.5]', 'noise=4', 'jpeg=[30,90]', 'noise=4'])).toEqual(['clean', 'noise=4', 'vshift=-0.25', 'vshift=0.5', 'vshift=1', 'jpeg=90', 'jpeg=30']);
    expect(conditionList([])).toEqual(['clean']);
  });

  it('refuses unknown kinds and strengths out of range, naming the option', () => {
    expect(() => parseConditionSpec('fog=3')).toThrow(UsageError);
    expect(() => parseConditionSpec('fog=3')).toThrow(/--condition.*unknown condition "fog"/);
    expect(() => parseConditionSpec('scale=2')).toThrow(/out of range: scale takes from 0.05 to 1/);
    expect(() => parseConditionSpec('gain=0')).toThrow(/gain takes above 0/);
    expect(() => parseConditionSpec('jpeg=50.5')).toThrow(/whole number/);
    expect(() => parseConditionSpec('noise=[2,x]')).toThrow(/"x" in "noise=\[2,x\]" is not a number/);
  });

  it('labels a configuration under a fault apart from its clean one', () => {
    expect(configLabel({ matcher: 'sgm' })).toBe('sgm');
    expect(configLabel({ matcher: 'sgm', condition: 'clean' })).toBe('sgm');
    expect(configLabel({ matcher: 'sgm', condition: 'noise=4' })).toBe('sgm [noise=4]');
  });
});
