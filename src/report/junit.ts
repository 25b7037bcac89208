/**
 * Gate outcomes as JUnit XML, the test-report format CI systems display: one test
 * suite, one test case per gate and configuration, a failure element (with the
 * figures) for each gate that fails.
 */
import type { Comparison } from '../stats/compare.js';
import { sliceKey } from '../core/regions.js';
import type { GateOutcome } from '../stats/gates.js';
import { fmtNum, fmtP } from './compare-md.js';

/** Escape text for an XML attribute or element (XML 1.0: the five entities; control characters dropped). */
export function xmlText(s: string): string {
  return s
    // eslint-disable-next-line no-control-regex -- XML 1.0 forbids these characters
    .replace(/[\x00-\x08\x0b\x0c\x0e-\x1f]/g, '')
    .replace(/&/g, '&amp;')
    .replace(/</g, '&lt;')
    .replace(/>/g, '&gt;')
    .replace(/"/g, '&quot;')
    .replace(/'/g, '&apos;');
}

export function junitXml(c: Comparison, gates: readonly GateOutcome[], suiteName: string): string {
  const failures = gates.filter((g) => !g.pass).length;
  const L = ['<?xml version="1.0" encoding="UTF-8"?>', `<testsuites name="parallax compare" tests="${gates.length}" failures="${failures}">`];
  L.push(`  <testsuite name="${xmlText(suiteName)}" tests="${gates.length}" failures="${failures}" errors="0" skipped="0">`);
  for (const g of gates) {
    const cfg = c.configs.find((x) => x.label === g.label);
    const d = cfg?.deltas.find((x) => x.region === g.gate.region && x.band === g.gate.band && x.metric === g.gate.metric);
    const name = `${sliceKey(g.gate.region, g.gate.band)}/${g.gate.metric}:${g.gate.allowance}`;
    const figures = d
      ? `baseline ${fmtNum(d.base)}, candidate ${fmtNum(d.cand)}, change ${fmtNum(d.change, true)}, ${Math.round(c.level * 100)} % interval ${d.changeCi ? `[${fmtNum(d.changeCi.lo, true)}, ${fmtNum(d.changeCi.hi, true)}]` : '–'}, p ${fmtP(d.p)}, pairs ${d.n}, smallest detectable ${fmtNum(g.smallest)}`
      : 'no figures';
    L.push(`    <testcase classname="parallax.${xmlText(g.label)}" name="${xmlText(name)}">`);
    if (!g.pass) L.push(`      <failure type="gate" message="${xmlText(g.reason)}">${xmlText(figures)}</failure>`);
    else L.push(`      <system-out>${xmlText(`${g.reason}; ${figures}`)}</system-out>`);
    L.push('    </testcase>');
  }
  L.push('  </testsuite>', '</testsuites>');
  return L.join('\n') + '\n';
}
