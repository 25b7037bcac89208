import { describe, expect, it } from 'vitest';
import { groupStats, segmentStats } from '../../src/metrics/segment-stats.js';
import { closeRel, rng, runNumpy } from './helpers.js';

const QS = [0, 0.01, 0.25, 0.5, 0.75, 0.9, 0.99, 1];
const TH = [0.5, 0, -1, 2, 1e-300, 0.25, 3, 1];

describe('segmentStats', () => {
  it('worked example by hand: e = [-1, 0.5, 2, -0.25] in two segments', () => {
    // buffer [-1, 99, 0.5, 2, -0.25], segments [0,1) and [2,5) -> the 99 is skipped.
    // count 4; sum |e| = 3.75; sum e^2 = 1 + 0.25 + 4 + 0.0625 = 5.3125; sum e = 1.25.
    // |e| sorted = [0.25, 0.5, 1, 2]; > 0.5: {1, 2} = 2; > 1: {2} = 1 (strict); > -1: all 4.
    // median: h = 1.5 -> 0.5 + 0.5*(1 - 0.5) = 0.75.
    const st = segmentStats(Float64Array.of(-1, 99, 0.5, 2, -0.25), Int32Array.of(0, 2), Int32Array.of(1, 5), 2, [0.5, 1, -1], [0.5]);
    expect(st).toEqual({ count: 4, sumAbs: 3.75, sumSq: 5.3125, sum: 1.25, above: [2, 1, 4], quantiles: [0.75] });
    const none = segmentStats(new Float64Array(3), Int32Array.of(1), Int32Array.of(1), 1, [1], [0.5]);
    expect(none).toEqual({ count: 0, sumAbs: 0, sumSq: 0, sum: 0, above: [0], quantiles: null });
  });

  it('agrees with numpy on the union of segments (large inputs: radix path), input untouched', () => {
    const r = rng(5);
    const kinds = ['gauss', 'dups', 'wide', 'tiny', 'onevalue', 'small', 'onthreshold'];
    const files: Record<string, ArrayBufferView> = {};
    const mine: Record<string, ReturnType<typeof segmentStats>> = {};
    for (const kind of kinds) {
      const n = kind === 'small' ? 700 : 60000 + Math.floor(r() * 5000);
      const buf = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        const g = r() + r() + r() - 1.5;
        buf[i] =
          kind === 'gauss' ? g * 2
          : kind === 'dups' ? (Math.floor(r() * 3) - 1) * 0.5 // -0.5, 0, 0.5 only
          : kind === 'wide' ? g * 1e3 * (r() < 0.01 ? 1e6 : 1)
          : kind === 'tiny' ? g * 1e-300 // subnormal and tiny values
          : kind === 'onevalue' ? -0.125
          : kind === 'onthreshold' ? [0.5, -0.5, 1, 3, -2, 0.25, 0, 0.75][Math.floor(r() * 8)] // exactly on thresholds
          : r() - 0.5;
      }
      // three segments with gaps between them; gap values must be ignored
      const a = Math.floor(n * 0.2), b = Math.floor(n * 0.5), c = Math.floor(n * 0.55);
      const starts = Int32Array.of(0, a + 10, c);
      const ends = Int32Array.of(a, b, n);
      for (let i = a; i < a + 10; i++) buf[i] = 1e9;
      for (let i = b; i < c; i++) buf[i] = -1e9;
      files[kind] = buf;
      files[kind + '_seg'] = Int32Array.from([...starts, ...ends]);
      const copy = Float64Array.from(buf);
      mine[kind] = segmentStats(buf, starts, ends, 3, TH, QS);
      let same = true;
      for (let i = 0; i < n; i++) if (!Object.is(buf[i], copy[i])) same = false;
      expect(same, `${kind}: input modified`).toBe(true); // documented: values not modified
    }
    const ref = runNumpy(files, `
out = {}
for k in ${JSON.stringify(kinds)}:
    v = load(k, '<f8'); s = load(k + '_seg', '<i4')
    e = np.concatenate([v[s[i]:s[i + 3]] for i in range(3)])
    a = np.abs(e)
    out[k] = {'count': int(e.size), 'sumAbs': float(a.sum()), 'sumSq': float((e * e).sum()), 'sum': float(e.sum()),
              'above': [int((a > t).sum()) for t in ${JSON.stringify(TH)}],
              'q': [float(x) for x in np.quantile(a, ${JSON.stringify(QS)})]}
print(json.dumps(out))
`);
    for (const k of kinds) {
      const m = mine[k], d = ref[k];
      expect(m.count, k).toBe(d.count);
      expect(m.above, k).toEqual(d.above); // exact counts, strict >
      for (const f of ['sumAbs', 'sumSq', 'sum'] as const) {
        // different summation order only: 1e-9 relative (or 1e-9 of sum |e| for sums that cancel)
        const ok = closeRel(m[f], d[f], 1e-9) || Math.abs(m[f] - d[f]) <= 1e-12 * d.sumAbs;
        expect(ok, `${k} ${f}: ${m[f]} vs ${d[f]}`).toBe(true);
      }
      // same order statistics and numpy's lerp: 1e-12 relative
      QS.forEach((q, i) => expect(closeRel(m.quantiles![i], d.q[i], 1e-12), `${k} q=${q}: ${m.quantiles![i]} vs ${d.q[i]}`).toBe(true));
    }
  });

  it('groupStats: each group equals segmentStats of its own segments (definition: union of segments)', () => {
    // segmentStats itself is checked against numpy above; here overlapping groups, shared
    // histograms (equal membership masks) and empty groups must not leak into each other.
    const r = rng(77);
    const n = 40000;
    const buf = new Float64Array(n);
    for (let i = 0; i < n; i++) buf[i] = (r() + r() + r() - 1.5) * (i % 3 === 0 ? 5 : 0.5);
    const nSegs = 12;
    const starts = new Int32Array(nSegs);
    const ends = new Int32Array(nSegs);
    const member = new Int32Array(nSegs);
    for (let s = 0; s < nSegs; s++) {
      starts[s] = s * 3300;
      ends[s] = s * 3300 + Math.floor(r() * 3300);
      member[s] = [0b0011, 0b0011, 0b0101, 0b0001, 0b1011, 0b0011][s % 6]; // group 3 = one segment kind only
    }
    member[7] = 0b0001; // membership repeated by several segments
    const nGroups = 5; // group 4: no segment at all
    const th = [0.5, 2, 0.1];
    const qs = [0.5, 0.75, 0.9, 0.99];
    const got = groupStats(buf, starts, ends, member, nSegs, nGroups, th, qs);
    for (let g = 0; g < nGroups; g++) {
      const idx = [...Array(nSegs).keys()].filter((s) => (member[s] & (1 << g)) !== 0);
      const want = segmentStats(buf, Int32Array.from(idx.map((s) => starts[s])), Int32Array.from(idx.map((s) => ends[s])), idx.length, th, qs);
      expect(got[g].count, `group ${g}`).toBe(want.count);
      expect(got[g].above, `group ${g}`).toEqual(want.above);
      expect(got[g].quantiles, `group ${g}`).toEqual(want.quantiles);
      for (const f of ['sumAbs', 'sumSq', 'sum'] as const) {
        expect(closeRel(got[g][f], want[f], 1e-12) || Math.abs(got[g][f] - want[f]) < 1e-9, `group ${g} ${f}`).toBe(true);
      }
    }
    expect(got[4].count).toBe(0);
    expect(got[4].quantiles).toBeNull();
  });
});
