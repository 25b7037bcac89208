/**
 * The report's client script: the ranking table, the charts and the pair views, drawn
 * from the embedded data (report-data.d.ts). A plain script (no imports), compiled by the
 * build (tsconfig.json here) into build/report-client.js, which the page embeds; every
 * text from the run goes through textContent or setAttribute, never innerHTML.
 */
(function (): void {
  'use strict';
  const data = JSON.parse(document.getElementById('plx-data')!.textContent!) as PlxReportData;
  const COLORS = data.configColors;
  interface State {
    dataset: string;
    tag: string;
    region: string;
    /** 'all' or a depth band label. */
    band: string;
    stat: 'mean' | 'pooled';
    sort: string;
    dir: 'asc' | 'desc';
    /** '' = every condition, else the ranking shows only configurations under it. */
    condition: string;
    /** Condition kind of the degradation chart. */
    kind: string;
  }
  const faults = data.conditions;
  const state: State = {
    dataset: data.datasets[0] || '',
    tag: '',
    region: 'known',
    band: 'all',
    stat: 'mean',
    sort: data.rankBy,
    dir: 'asc',
    condition: faults.kinds.length ? 'clean' : '',
    kind: faults.kinds.length ? faults.kinds[0].id : '',
  };
  const conditionOfLabel: Record<string, string> = {};
  faults.labels.forEach((l) => (conditionOfLabel[l.label] = l.condition));
  const shownLabel = (label: string): boolean => state.condition === '' || (conditionOfLabel[label] || 'clean') === state.condition;
  const shownCondition = (r: { label: string }): boolean => shownLabel(r.label);
  interface Cell {
    v: number | null;
    lo: number | null;
    hi: number | null;
    n: number;
  }

  const cellsNow = (): Record<string, PlxSummaryRow[]> => (data.summary[state.dataset] || {})[state.tag] || {};
  const keyOf = (region: string, band: string): string => (band === 'all' ? region : region + '@' + band);
  const rowsNow = (): PlxSummaryRow[] => (cellsNow()[keyOf(state.region, state.band)] || []).filter(shownCondition);
  const hasUsable = Object.values(data.summary).some((byTag) => Object.values(byTag).some((bySlice) => Object.values(bySlice).some((rows) => rows.some((r) => r.usable !== null))));
  function cell(row: PlxSummaryRow, metric: string): Cell {
    const m = row.m[metric];
    if (!m) return { v: null, lo: null, hi: null, n: 0 };
    const n = m[3] ?? 0;
    return state.stat === 'pooled' ? { v: m[4] ?? null, lo: m[5] ?? null, hi: m[6] ?? null, n } : { v: m[0] ?? null, lo: m[1] ?? null, hi: m[2] ?? null, n };
  }
  const betterAsc = (metric: string): boolean => data.better[metric] !== 'higher';
  function sortKey(row: PlxSummaryRow, metric: string): number | null {
    const v = cell(row, metric).v;
    if (v === null) return null;
    return data.better[metric] === 'abs' ? Math.abs(v) : v;
  }
  // ---------------------------------------------------------------- ranking table
  const table = document.getElementById('rank-table')!;
  const thead = table.querySelector('thead')!;
  const tbody = table.querySelector('tbody')!;
  const headRow = el('tr');
  const cols = [{ key: 'label', name: 'configuration' }, { key: 'n', name: 'pairs' }].concat(data.metrics.map((m) => ({ key: m, name: m })));
  cols.forEach((c) => {
    const th = el('th', { scope: 'col', 'data-col': c.key });
    if (c.key === 'label' || c.key === 'n') th.textContent = c.name;
    else {
      const b = el('button', { type: 'button', 'data-sort': c.key, title: 'Sort by ' + c.name }, c.name);
      th.appendChild(b);
      if (data.units[c.key]) th.appendChild(el('span', { class: 'unit' }, ' ' + data.units[c.key]));
      th.setAttribute('aria-sort', 'none');
      b.addEventListener('click', () => {
        if (state.sort === c.key) state.dir = state.dir === 'asc' ? 'desc' : 'asc';
        else {
          state.sort = c.key;
          state.dir = betterAsc(c.key) ? 'asc' : 'desc';
        }
        renderTable();
        renderScatter();
        renderByBand();
      });
    }
    headRow.appendChild(th);
  });
  if (hasUsable) {
    const th = el('th', { scope: 'col', 'data-col': 'usable', title: 'The distance up to which ' + data.usableRule + ' holds on the region (whole region, all distances)' }, 'usable to');
    th.appendChild(el('span', { class: 'unit' }, ' m'));
    headRow.appendChild(th);
  }
  thead.appendChild(headRow);

  function renderTable(): void {
    const rows = rowsNow().slice();
    const key = state.sort;
    const sgn = state.dir === 'asc' ? 1 : -1;
    rows.sort((a, b) => {
      const x = sortKey(a, key);
      const y = sortKey(b, key);
      if (x === null && y === null) return byText(a.label, b.label);
      if (x === null) return 1;
      if (y === null) return -1;
      return sgn * (x - y) || byText(a.label, b.label);
    });
    writeRankCaption(rows);
    thead.querySelectorAll('th[aria-sort]').forEach((th) => {
      th.setAttribute('aria-sort', th.getAttribute('data-col') === key ? (state.dir === 'asc' ? 'ascending' : 'descending') : 'none');
    });
    clear(tbody);
    rows.forEach((r) => {
      const tr = el('tr', { 'data-label': r.label });
      tr.appendChild(el('th', { scope: 'row' }, r.label));
      const np = el('td', { title: 'pairs with a non-empty region; intervals resample ' + r.n_units + ' ' + r.unit + (r.n_units === 1 ? '' : 's') }, String(r.n_pairs));
      if (r.unit === 'group') np.appendChild(el('span', { class: 'ci' }, r.n_units + ' groups'));
      if (r.n_failed) np.appendChild(el('span', { class: 'ci failed' }, r.n_failed + ' failed'));
      tr.appendChild(np);
      data.metrics.forEach((m) => {
        const c = cell(r, m);
        const td = el('td', { 'data-metric': m, 'data-value': c.v === null ? '' : String(c.v) }, fmt(c.v));
        if (c.lo !== null && c.hi !== null) {
          const title = 'BCa ' + Math.round(data.level * 100) + ' % interval over ' + r.n_units + ' ' + r.unit + 's; mean uses ' + c.n + ' pairs';
          td.appendChild(el('span', { class: 'ci', title }, '[' + fmt(c.lo) + ', ' + fmt(c.hi) + '] n=' + c.n));
        } else if (c.v !== null) td.appendChild(el('span', { class: 'ci' }, 'n=' + c.n));
        tr.appendChild(td);
      });
      if (hasUsable) tr.appendChild(usableCell(rowFor(keyOf(state.region, 'all'), r.label)));
      tbody.appendChild(tr);
    });
  }

  const rowFor = (key: string, label: string): PlxSummaryRow | undefined => (cellsNow()[key] || []).filter((x) => x.label === label)[0];
  /** "3.40 [3.10, 3.80]", ">12.3" (holds to the farthest truth), "<2.00" (fails at the nearest). */
  function usableText(u: NonNullable<PlxSummaryRow['usable']>): string {
    const mark = u[3] === 'beyond' ? '>' : u[3] === 'nowhere' ? '<' : '';
    return mark + fmt(u[0]);
  }
  function usableCell(row: PlxSummaryRow | undefined): HTMLElement {
    const u = row ? row.usable : null;
    const td = el('td', { 'data-metric': 'usable', 'data-value': u ? String(u[0]) : '' }, u ? usableText(u) : '\u2013');
    if (u && u[1] !== null && u[2] !== null) td.appendChild(el('span', { class: 'ci' }, '[' + fmt(u[1]) + ', ' + fmt(u[2]) + ']'));
    return td;
  }

  /** What the table is sorted by, and the smallest change of that figure each configuration's pairs can see. */
  function writeRankCaption(rows: PlxSummaryRow[]): void {
    const key = state.sort;
    const unit = data.units[key] === '%' ? ' points' : data.units[key] ? ' ' + data.units[key] : '';
    let text = 'Sorted by ' + state.region + '/' + key + ', ' + (state.dir === 'asc' ? 'lowest' : 'highest') + ' first';
    if (key === data.rankBy) text += ' (a bad-pixel rate: pixels without an answer count as errors, so answering less does not rank higher)';
    text += '.';
    const seen = rows
      .map((r) => {
        const m = r.m[key];
        const d = m ? m[7] : null;
        return d === null || d === undefined ? null : r.label + ' ' + fmt(d) + unit + ' (' + r.n_units + ' ' + r.unit + 's)';
      })
      .filter((x): x is string => x !== null);
    if (seen.length) text += ' Smallest change of the mean ' + state.region + '/' + key + ' these pairs can tell from noise (' + Math.round(data.level * 100) + ' % level, 80 % power): ' + seen.join('; ') + '.';
    document.getElementById('rank-caption')!.textContent = text;
  }

  // ---------------------------------------------------------------- charts
  interface Point {
    label: string;
    t: number;
    y: number;
  }
  function renderScatter(): void {
    const host = document.getElementById('scatter')!;
    clear(host);
    const metric = state.sort === 'time_ms' || state.sort === 'peak_mb' ? 'epe' : state.sort;
    const timeRows = cellsNow().known || [];
    const pts: Point[] = [];
    rowsNow().forEach((r) => {
      const tr = timeRows.filter((x) => x.label === r.label)[0];
      const t = tr && tr.m.time_ms ? (tr.m.time_ms[0] ?? null) : null;
      const y = cell(r, metric).v;
      if (t !== null && y !== null && isFinite(t) && isFinite(y)) pts.push({ label: r.label, t, y: data.better[metric] === 'abs' ? Math.abs(y) : y });
    });
    const shown = data.better[metric] === 'abs' ? '|' + metric + '|' : metric;
    document.getElementById('scatter-caption')!.textContent =
      'Accuracy (' + state.stat + ' ' + shown + ' on ' + state.region + ', ' + (data.units[metric] || '') + ') against mean match time per pair (ms). Filled points with the line: the Pareto front (no other configuration is both faster and more accurate).';
    const W = 520;
    const H = 320;
    const pad = { l: 58, r: 16, t: 14, b: 40 };
    const svg = sv('svg', { width: W, height: H, viewBox: '0 0 ' + W + ' ' + H, role: 'img', 'aria-label': 'accuracy against time' });
    axes(svg, W, H, pad, 'time per pair (ms)', metric + (data.units[metric] ? ' (' + data.units[metric] + ')' : ''));
    host.appendChild(svg);
    if (!pts.length) {
      svg.appendChild(sv('text', { x: W / 2, y: H / 2, 'text-anchor': 'middle' }, 'no timed configuration with this figure'));
      return;
    }
    const ts = pts.map((p) => p.t);
    const ys = pts.map((p) => p.y);
    const tmin = Math.min(...ts);
    const tmax = Math.max(...ts);
    const ymin = Math.min(...ys);
    const ymax = Math.max(...ys);
    const logx = tmin > 0 && tmax / tmin > 20;
    const fx = logx ? (t: number): number => Math.log10(t) : (t: number): number => t;
    let x0 = fx(tmin);
    let x1 = fx(tmax);
    if (x1 - x0 < 1e-12) {
      x0 -= 0.5;
      x1 += 0.5;
    }
    const ypad = (ymax - ymin) * 0.08 || Math.abs(ymax) * 0.1 || 1;
    let y0 = Math.min(0, ymin - ypad);
    const y1 = ymax + ypad;
    if (ymin - ypad > 0 && ymin > 0.5 * ymax) y0 = ymin - ypad;
    const xpad = (x1 - x0) * 0.08;
    x0 -= xpad;
    x1 += xpad;
    const X = (t: number): number => pad.l + ((fx(t) - x0) / (x1 - x0)) * (W - pad.l - pad.r);
    const Y = (v: number): number => H - pad.b - ((v - y0) / (y1 - y0)) * (H - pad.t - pad.b);
    ticks(y0, y1, 5).forEach((v) => {
      svg.appendChild(sv('line', { x1: pad.l - 4, y1: Y(v), x2: W - pad.r, y2: Y(v), stroke: '#e3e6ea' }));
      svg.appendChild(sv('text', { x: pad.l - 6, y: Y(v) + 4, 'text-anchor': 'end' }, tickFmt(v)));
    });
    const xt = logx ? logTicks(x0, x1) : ticks(x0, x1, 5);
    xt.forEach((t) => {
      if (logx && !(t > 0)) return;
      svg.appendChild(sv('text', { x: X(t), y: H - pad.b + 14, 'text-anchor': 'middle' }, tickFmt(t)));
    });
    const higher = data.better[metric] === 'higher';
    const sorted = pts.slice().sort((a, b) => a.t - b.t || (higher ? b.y - a.y : a.y - b.y));
    const front: Point[] = [];
    let best: number | null = null;
    sorted.forEach((p) => {
      if (best === null || (higher ? p.y > best : p.y < best)) {
        front.push(p);
        best = p.y;
      }
    });
    if (front.length > 1) {
      const points = front.map((p) => X(p.t) + ',' + Y(p.y)).join(' ');
      svg.appendChild(sv('polyline', { points, fill: 'none', stroke: '#0b5d8a', 'stroke-width': 1.5, 'stroke-dasharray': '5 3' }));
    }
    pts.forEach((p) => {
      const onFront = front.indexOf(p) >= 0;
      const c = sv('circle', { cx: X(p.t), cy: Y(p.y), r: 5, fill: onFront ? '#0b5d8a' : '#fff', stroke: '#0b5d8a', 'stroke-width': 1.5, 'data-front': onFront ? '1' : '0' });
      c.appendChild(sv('title', null, p.label + ': ' + fmt(p.y) + ' at ' + fmt(p.t) + ' ms' + (onFront ? ' (Pareto front)' : '')));
      svg.appendChild(c);
      const right = X(p.t) > W * 0.62;
      svg.appendChild(sv('text', { x: X(p.t) + (right ? -7 : 7), y: Y(p.y) - 6, 'text-anchor': right ? 'end' : 'start' }, p.label.length > 28 ? p.label.slice(0, 27) + '\u2026' : p.label));
    });
  }

  /** The chosen figure against the depth bands, one line per configuration. */
  function renderByBand(): void {
    const host = document.getElementById('by-band');
    if (!host) return;
    clear(host);
    const metric = state.sort === 'time_ms' || state.sort === 'peak_mb' ? data.rankBy : state.sort;
    const bands = data.bands;
    const series = rowsAt(state.region, 'all').map((r) => ({
      label: r.label,
      color: colorOf(r.label),
      points: bands.flatMap((b, k): [number, number][] => {
        const row = rowFor(keyOf(state.region, b), r.label);
        const v = row ? cell(row, metric).v : null;
        return v === null ? [] : [[k, v]];
      }),
      dash: '',
      legend: r.label,
    }));
    const ys = series.flatMap((s) => s.points.map((p) => p[1]));
    host.appendChild(
      lineChart({
        aria: metric + ' against distance',
        xlab: 'true distance band',
        ylab: state.stat + ' ' + metric + (data.units[metric] ? ' (' + data.units[metric] + ')' : ''),
        x: [0, Math.max(1, bands.length - 1)],
        y: [Math.min(0, ...ys), Math.max(0, ...ys)],
        xTicks: bands.map((_, k) => k),
        xTickText: (k) => bands[k] || '',
        series,
      }),
    );
    document.getElementById('by-band-caption')!.textContent =
      'The ranking figure (' + state.stat + ' ' + metric + ' on ' + state.region + ') in each band of true distance, one line per configuration; sort the ranking by another column to plot that figure.';
  }

  const rowsAt = (region: string, band: string): PlxSummaryRow[] => (cellsNow()[keyOf(region, band)] || []).filter(shownCondition);

  /** Measured depth error by distance beside the error the disparity accuracy predicts. */
  function renderDepthError(): void {
    const host = document.getElementById('depth-error');
    if (!host) return;
    clear(host);
    const views = ((data.depth[state.dataset] || {})[state.region] || []).filter(shownCondition);
    if (!views.length) {
      host.appendChild(el('p', { class: 'ci' }, 'No depth profile for ' + state.region + ' (pairs without a camera).'));
      return;
    }
    const curve = (v: PlxDepthView, ys: (number | null)[]): [number, number][] => ys.flatMap((y, k): [number, number][] => (y === null ? [] : [[v.z[k], y]]));
    const scaled = (v: PlxDepthView, d: number | null): [number, number][] => (d === null ? [] : curve(v, v.perPx.map((x) => (x === null ? null : x * d))));
    const zs = views.flatMap((v) => v.z);
    const series = views.flatMap((v) => [
      { label: v.label, color: colorOf(v.label), points: curve(v, v.measured), dash: '', legend: v.label + (v.epe === null ? '' : ' (epe ' + fmt(v.epe) + ')') },
      { label: v.label, color: colorOf(v.label), points: scaled(v, v.epe), dash: '6 3' },
      { label: v.label, color: colorOf(v.label), points: scaled(v, 0.25), dash: '1 3' },
    ]);
    const ys = series.flatMap((s) => s.points.map((p) => p[1]));
    const z0 = Math.min(...zs);
    const z1 = Math.max(...zs);
    host.appendChild(
      lineChart({
        aria: 'depth error against distance',
        xlab: 'true distance (m)',
        ylab: 'mean |depth error| (m)',
        x: [z0, z1 > z0 ? z1 : z0 + 1],
        y: [0, Math.max(...ys, 1e-6)],
        xTicks: ticks(z0, z1, 5),
        xTickText: (v) => tickFmt(v),
        series,
      }),
    );
  }

  /** The usable range of each configuration on the chosen region, in words. */
  function renderUsable(): void {
    const host = document.getElementById('usable-list');
    if (!host) return;
    const parts = rowsAt(state.region, 'all')
      .filter((r) => r.usable !== null)
      .map((r) => {
        const u = r.usable!;
        const ci = u[1] !== null && u[2] !== null ? ' [' + fmt(u[1]) + ', ' + fmt(u[2]) + ' m]' : '';
        const what = u[3] === 'beyond' ? 'holds beyond ' + fmt(u[0]) + ' m, the farthest truth' : u[3] === 'nowhere' ? 'fails already at ' + fmt(u[0]) + ' m, the nearest truth' : 'holds up to ' + fmt(u[0]) + ' m';
        return r.label + ': ' + what + ci;
      });
    host.textContent = parts.length
      ? 'Usable range on ' + state.region + ' (' + data.usableRule + ' in every fine distance bin from the nearest; ' + Math.round(data.level * 100) + ' % BCa interval over pairs): ' + parts.join('; ') + '.'
      : '';
  }

  function renderCurves(): void {
    const host = document.getElementById('curves')!;
    clear(host);
    const th = data.thresholds;
    host.appendChild(
      lineChart({
        aria: 'bad-pixel rate against threshold',
        xlab: 'threshold (px)',
        ylab: state.stat + ' rate (%)',
        x: [0, Math.max(...th)],
        y: [0, 100],
        xTicks: th,
        xTickText: String,
        series: rowsNow().map((r, i) => ({
          label: r.label,
          color: COLORS[i % COLORS.length],
          points: th.flatMap((t, k): [number, number][] => {
            const v = cell(r, data.rateNames[k]).v;
            return v === null ? [] : [[t, v]];
          }),
          dash: i >= COLORS.length ? '4 2' : '',
          legend: r.label,
        })),
      }),
    );
  }

  // Under camera faults a configuration's colour is its matcher's: the same in every condition and in the fault curves.
  const matcherOf: Record<string, string> = {};
  faults.labels.forEach((l) => (matcherOf[l.label] = l.matcher));
  const colorKeys = faults.kinds.length ? data.configs.map((c) => matcherOf[c] || c).filter((m, i, all) => all.indexOf(m) === i) : data.configs;
  const colorOf = (label: string): string => COLORS[Math.max(0, colorKeys.indexOf(faults.kinds.length ? matcherOf[label] || label : label)) % COLORS.length];

  function renderSparsify(): void {
    const host = document.getElementById('sparsify')!;
    clear(host);
    const views = ((data.sparsify[state.dataset] || {})[state.region] || []).filter(shownCondition);
    if (!views.length) {
      host.appendChild(el('p', { class: 'ci' }, 'No configuration in this dataset gave a confidence map for ' + state.region + '.'));
      return;
    }
    const curve = (ys: number[]): [number, number][] => ys.map((y, k): [number, number] => [data.shares[k], y]);
    host.appendChild(
      lineChart({
        aria: 'epe against the share of predictions kept',
        xlab: 'share kept, most confident first (%)',
        ylab: 'epe of the kept (px)',
        x: [0, 1],
        y: [0, Math.max(...views.flatMap((v) => v.conf))],
        xTicks: [0.05, 0.25, 0.5, 0.75, 1],
        xTickText: (v) => String(Math.round(v * 100)),
        series: views.flatMap((v) => [
          { label: v.label, color: colorOf(v.label), points: curve(v.conf), dash: '', legend: v.label + ' (' + v.pairs + ')' },
          { label: v.label, color: colorOf(v.label), points: curve(v.oracle), dash: '5 3' },
        ]),
      }),
    );
  }

  function renderFlicker(): void {
    const host = document.getElementById('flicker')!;
    clear(host);
    const views = ((data.flicker[state.dataset] || {})[state.region] || []).filter(shownCondition);
    if (!views.length) {
      host.appendChild(el('p', { class: 'ci' }, 'No sequence (pairs with a frame) in this dataset.'));
      return;
    }
    const frames = views.flatMap((v) => v.points.map((p) => p[0]));
    const lo = Math.min(...frames);
    const hi = Math.max(...frames);
    host.appendChild(
      lineChart({
        aria: 'flicker against frame',
        xlab: 'frame',
        ylab: 'flicker (px)',
        x: [lo, hi > lo ? hi : lo + 1],
        y: [0, Math.max(...views.flatMap((v) => v.points.map((p) => p[1])))],
        xTicks: [...new Set(frames)].sort((a, b) => a - b),
        xTickText: String,
        series: views.map((v) => ({ label: v.label, color: colorOf(v.label), points: v.points, dash: '', legend: v.label })),
      }),
    );
  }

  /** Sub-pixel honesty: the share of predictions per fractional-part bin, and the mean error per bin of the truth's fraction. */
  function renderSubpixel(): void {
    const host = document.getElementById('subpixel')!;
    clear(host);
    const views = ((data.subpixel[state.dataset] || {})[state.region] || []).filter(shownCondition);
    if (!views.length) return;
    const centres = views[0].hist.map((_, k) => (k + 0.5) / views[0].hist.length);
    const common = { x: [0, 1] as [number, number], xTicks: [0, 0.25, 0.5, 0.75, 1], xTickText: (v: number) => String(v) };
    const share = (h: number[]): [number, number][] => {
      const n = h.reduce((s, x) => s + x, 0) || 1;
      return h.map((c, k): [number, number] => [centres[k], (100 * c) / n]);
    };
    const errs = (e: (number | null)[]): [number, number][] => e.flatMap((v, k): [number, number][] => (v === null ? [] : [[centres[k], v]]));
    host.appendChild(
      lineChart({
        ...common,
        aria: 'share of predictions per fractional part',
        xlab: 'fractional part of the predicted disparity',
        ylab: 'share of predictions (%)',
        y: [0, Math.max(...views.flatMap((v) => share(v.hist).map((p) => p[1])))],
        series: views.map((v) => ({ label: v.label, color: colorOf(v.label), points: share(v.hist), dash: '', legend: v.label + ' lock ' + fmt(v.lock) })),
      }),
    );
    host.appendChild(
      lineChart({
        ...common,
        aria: 'mean error per fractional part of the truth',
        xlab: "fractional part of the truth's disparity",
        ylab: 'mean |error| (px)',
        y: [0, Math.max(...views.flatMap((v) => errs(v.err).map((p) => p[1])))],
        series: views.map((v) => ({ label: v.label, color: colorOf(v.label), points: errs(v.err), dash: '', legend: v.label })),
      }),
    );
  }

  // ---------------------------------------------------------------- camera faults
  /** The ranking figure against the chosen fault's strength, one line per matcher, dashed: its interval. */
  function renderDegradation(): void {
    const host = document.getElementById('degradation');
    if (!host || !state.kind) return;
    clear(host);
    const metric = state.sort === 'time_ms' || state.sort === 'peak_mb' ? data.rankBy : state.sort;
    const kind = faults.kinds.filter((k) => k.id === state.kind)[0]!;
    const rows = cellsNow()[keyOf(state.region, state.band)] || [];
    const matchers = faults.labels.filter((l) => l.condition === 'clean').map((l) => l.matcher);
    const strengths: number[] = [kind.neutral];
    const series: ChartSeries[] = [];
    matchers.forEach((m) => {
      const at = faults.labels.filter((l) => l.matcher === m && (l.condition === 'clean' || l.kind === kind.id));
      const pts: { x: number; c: Cell }[] = [];
      at.forEach((l) => {
        const row = rows.filter((r) => r.label === l.label)[0];
        const c = row ? cell(row, metric) : null;
        const x = l.strength === null ? kind.neutral : l.strength;
        if (c && c.v !== null) pts.push({ x, c });
        if (strengths.indexOf(x) < 0) strengths.push(x);
      });
      pts.sort((a, b) => a.x - b.x);
      const line = (f: (c: Cell) => number | null): [number, number][] => pts.flatMap((p): [number, number][] => (f(p.c) === null ? [] : [[p.x, f(p.c)!]]));
      series.push({ label: m, color: colorOf(m), points: line((c) => c.v), dash: '', legend: m });
      series.push({ label: m, color: colorOf(m), points: line((c) => c.lo), dash: '3 3' });
      series.push({ label: m, color: colorOf(m), points: line((c) => c.hi), dash: '3 3' });
    });
    strengths.sort((a, b) => a - b);
    const ys = series.flatMap((s) => s.points.map((p) => p[1]));
    const x0 = strengths[0]!;
    const x1 = strengths[strengths.length - 1]!;
    host.appendChild(
      lineChart({
        aria: metric + ' against ' + kind.id,
        xlab: kind.id + ' (' + kind.unit + ')',
        ylab: state.stat + ' ' + metric + (data.units[metric] ? ' (' + data.units[metric] + ')' : ''),
        x: [x0, x1 > x0 ? x1 : x0 + 1],
        y: [Math.min(0, ...ys), Math.max(0, ...ys)],
        xTicks: strengths,
        xTickText: (v) => String(v),
        series,
      }),
    );
    document.getElementById('degradation-caption')!.textContent =
      state.stat + ' ' + metric + ' on ' + state.region + (state.band === 'all' ? '' : ' at ' + state.band) + ' against the strength of ' + kind.id + ' (' + kind.what + '), one colour per matcher; ' + kind.neutral + ' = clean. Dashed: the ' + Math.round(data.level * 100) + ' % interval over pairs.';
  }

  /** Breaking points of the dataset: one row per matcher, one column per fault kind. */
  function renderBreaking(): void {
    const table = document.getElementById('breaking-table');
    if (!table) return;
    const head = table.querySelector('thead')!;
    const body = table.querySelector('tbody')!;
    clear(head);
    clear(body);
    const hr = el('tr');
    hr.appendChild(el('th', null, 'Matcher'));
    faults.kinds.forEach((k) => hr.appendChild(el('th', null, k.id + ', ' + k.unit)));
    head.appendChild(hr);
    const points = faults.breaking.filter((b) => b.dataset === state.dataset);
    const matchers = points.map((b) => b.matcher).filter((m, i, all) => all.indexOf(m) === i);
    const bound = (v: number | null): string => (v === null ? 'beyond' : String(v));
    matchers.forEach((m) => {
      const tr = el('tr');
      tr.appendChild(el('td', null, m));
      faults.kinds.forEach((k) => {
        const b = points.filter((p) => p.matcher === m && p.kind === k.id)[0];
        const text = !b ? '-' : (b.strength === null ? 'beyond ' + b.strongest : String(b.strength)) + (b.pairs >= 2 ? ' [' + bound(b.lo) + ', ' + bound(b.hi) + ']' : '');
        tr.appendChild(el('td', { 'data-kind': k.id }, text));
      });
      body.appendChild(tr);
    });
    document.getElementById('breaking-caption')!.textContent =
      'Breaking point: the weakest strength at which ' + faults.rule.replace(/:[^:]*$/, '') + ' worsens by more than ' + faults.rule.replace(/^.*:/, '') + ' over clean (mean paired change over pairs), with its ' + Math.round(data.level * 100) + ' % interval over pairs; beyond: no strength tried breaks.';
  }

  // ---------------------------------------------------------------- controls
  function bindSelect(id: string, key: 'dataset' | 'region' | 'band' | 'tag' | 'stat' | 'condition' | 'kind'): void {
    const s = document.getElementById(id) as HTMLSelectElement | null;
    if (!s) return;
    s.value = state[key];
    s.addEventListener('change', () => {
      if (key === 'stat') state.stat = s.value === 'pooled' ? 'pooled' : 'mean';
      else state[key] = s.value;
      renderAll();
    });
  }
  function renderAll(): void {
    renderTable();
    renderScatter();
    renderCurves();
    renderSparsify();
    renderSubpixel();
    renderFlicker();
    renderByBand();
    renderDepthError();
    renderUsable();
    renderDegradation();
    renderBreaking();
  }
  bindSelect('sel-dataset', 'dataset');
  bindSelect('sel-region', 'region');
  bindSelect('sel-band', 'band');
  bindSelect('sel-tag', 'tag');
  bindSelect('sel-stat', 'stat');
  bindSelect('sel-condition', 'condition');
  bindSelect('sel-kind', 'kind');
  renderAll();

  // ---------------------------------------------------------------- pairs (pair-views.ts)
  document.querySelectorAll('details.pair').forEach((d) => {
    d.addEventListener('toggle', () => {
      if (!(d as HTMLDetailsElement).open || d.getAttribute('data-built')) return;
      d.setAttribute('data-built', '1');
      buildPair(data, data.pairs[Number(d.getAttribute('data-index'))], d.querySelector('.pairbody')!);
    });
  });
})();
