/**
 * The one string order of the project: plain UTF-16 code-unit comparison, independent
 * of locale, so every sort, sum and table comes out the same on every machine.
 */
export function byCodeUnits(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}

/** Items grouped by a key, groups and items in the order first seen. */
export function groupBy<T>(items: Iterable<T>, key: (item: T) => string): Map<string, T[]> {
  const out = new Map<string, T[]>();
  for (const it of items) {
    const k = key(it);
    const list = out.get(k);
    if (list) list.push(it);
    else out.set(k, [it]);
  }
  return out;
}

const NUMBER_RUN = /\d+(?:\.\d+)?/g;

/**
 * Natural order for configuration labels: runs of digits (with an optional decimal
 * part) compare by value, the text between them by code units, so `sgm:p2=16` <
 * `sgm:p2=192` < `sgm:p2=400`. Labels equal under that order fall back to code units,
 * so the order is total and the same on every machine.
 */
export function byNatural(a: string, b: string): number {
  const ta = tokens(a);
  const tb = tokens(b);
  for (let i = 0; i < Math.min(ta.length, tb.length); i++) {
    const x = ta[i];
    const y = tb[i];
    const c = typeof x === 'number' && typeof y === 'number' ? x - y : byCodeUnits(String(x), String(y));
    if (c !== 0) return c < 0 ? -1 : 1;
  }
  return ta.length - tb.length || byCodeUnits(a, b);
}

/** Text and number runs of a label, alternating; text runs are strings (possibly empty). */
function tokens(s: string): (string | number)[] {
  const out: (string | number)[] = [];
  let last = 0;
  for (const m of s.matchAll(NUMBER_RUN)) {
    out.push(s.slice(last, m.index), Number(m[0]));
    last = m.index + m[0].length;
  }
  out.push(s.slice(last));
  return out;
}
