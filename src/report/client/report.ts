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
    stat: 'mean' | 'pooled';
    sort: string;
    dir: 'asc' | 'desc';
  }
  const state: State = { dataset: data.datasets[0] || '', tag: '', region: 'known', stat: 'mean', sort: data.rankBy, dir: 'asc' };
  interface Cell {
    v: number | null;
    lo: number | null;
    hi: number | null;
    n: number;
  }

  const cellsNow = (): Record<string, PlxSummaryRow[]> => (data.summary[state.dataset] || {})[state.tag] || {};
  const rowsNow = (): PlxSummaryRow[] => cellsNow()[state.region] || [];
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
      });
    }
    headRow.appendChild(th);
  });
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
      tbody.appendChild(tr);
    });
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

  function renderCurves(): void {
    const host = document.getElementById('curves')!;
    clear(host);
    const th = data.thresholds;
    const W = 520;
    const H = 320;
    const pad = { l: 50, r: 150, t: 14, b: 40 };
    const svg = sv('svg', { width: W, height: H, viewBox: '0 0 ' + W + ' ' + H, role: 'img', 'aria-label': 'bad-pixel rate against threshold' });
    axes(svg, W, H, pad, 'threshold (px)', state.stat + ' rate (%)');
    host.appendChild(svg);
    const tmax = Math.max(...th);
    const X = (t: number): number => pad.l + (t / tmax) * (W - pad.l - pad.r);
    const Y = (v: number): number => H - pad.b - (v / 100) * (H - pad.t - pad.b);
    [0, 20, 40, 60, 80, 100].forEach((v) => {
      svg.appendChild(sv('line', { x1: pad.l - 4, y1: Y(v), x2: W - pad.r, y2: Y(v), stroke: '#e3e6ea' }));
      svg.appendChild(sv('text', { x: pad.l - 6, y: Y(v) + 4, 'text-anchor': 'end' }, String(v)));
    });
    th.forEach((t) => svg.appendChild(sv('text', { x: X(t), y: H - pad.b + 14, 'text-anchor': 'middle' }, String(t))));
    rowsNow().forEach((r, i) => {
      const col = COLORS[i % COLORS.length];
      const pts: [number, number][] = [];
      th.forEach((t, k) => {
        const v = cell(r, data.rateNames[k]).v;
        if (v !== null) pts.push([X(t), Y(v)]);
      });
      if (!pts.length) return;
      const points = pts.map((p) => p[0] + ',' + p[1]).join(' ');
      svg.appendChild(sv('polyline', { points, fill: 'none', stroke: col, 'stroke-width': 2, 'stroke-dasharray': i >= COLORS.length ? '4 2' : '' }));
      pts.forEach((p) => svg.appendChild(sv('rect', { x: p[0] - 3, y: p[1] - 3, width: 6, height: 6, fill: col })));
      const ly = pad.t + 12 + i * 16;
      svg.appendChild(sv('rect', { x: W - pad.r + 10, y: ly - 9, width: 10, height: 10, fill: col }));
      svg.appendChild(sv('text', { x: W - pad.r + 24, y: ly }, r.label.length > 20 ? r.label.slice(0, 19) + '\u2026' : r.label));
    });
  }

  function renderSparsify(): void {
    const host = document.getElementById('sparsify')!;
    clear(host);
    const views = (data.sparsify[state.dataset] || {})[state.region] || [];
    if (!views.length) {
      host.appendChild(el('p', { class: 'ci' }, 'No configuration in this dataset gave a confidence map for ' + state.region + '.'));
      return;
    }
    const W = 520;
    const H = 320;
    const pad = { l: 50, r: 150, t: 14, b: 40 };
    const svg = sv('svg', { width: W, height: H, viewBox: '0 0 ' + W + ' ' + H, role: 'img', 'aria-label': 'epe against the share of predictions kept' });
    axes(svg, W, H, pad, 'share kept, most confident first (%)', 'epe of the kept (px)');
    host.appendChild(svg);
    const ymax = Math.max(1e-9, ...views.flatMap((v) => v.conf));
    const X = (share: number): number => pad.l + share * (W - pad.l - pad.r);
    const Y = (v: number): number => H - pad.b - (v / ymax) * (H - pad.t - pad.b);
    ticks(0, ymax, 5).forEach((v) => {
      svg.appendChild(sv('line', { x1: pad.l - 4, y1: Y(v), x2: W - pad.r, y2: Y(v), stroke: '#e3e6ea' }));
      svg.appendChild(sv('text', { x: pad.l - 6, y: Y(v) + 4, 'text-anchor': 'end' }, fmt(v)));
    });
    [0.05, 0.25, 0.5, 0.75, 1].forEach((s) => svg.appendChild(sv('text', { x: X(s), y: H - pad.b + 14, 'text-anchor': 'middle' }, String(Math.round(s * 100)))));
    views.forEach((v) => {
      const col = COLORS[Math.max(0, data.configs.indexOf(v.label)) % COLORS.length];
      const line = (ys: number[], dash: string): void => {
        const points = ys.map((y, k) => X(data.shares[k]) + ',' + Y(y)).join(' ');
        svg.appendChild(sv('polyline', { points, fill: 'none', stroke: col, 'stroke-width': 2, 'stroke-dasharray': dash, 'data-label': v.label }));
      };
      line(v.conf, '');
      line(v.oracle, '5 3');
    });
    views.forEach((v, i) => {
      const col = COLORS[Math.max(0, data.configs.indexOf(v.label)) % COLORS.length];
      const ly = pad.t + 12 + i * 16;
      svg.appendChild(sv('rect', { x: W - pad.r + 10, y: ly - 9, width: 10, height: 10, fill: col }));
      svg.appendChild(sv('text', { x: W - pad.r + 24, y: ly }, (v.label.length > 20 ? v.label.slice(0, 19) + '\u2026' : v.label) + ' (' + v.pairs + ')'));
    });
  }

  // ---------------------------------------------------------------- controls
  function bindSelect(id: string, key: 'dataset' | 'region' | 'tag' | 'stat'): void {
    const s = document.getElementById(id) as HTMLSelectElement | null;
    if (!s) return;
    s.value = state[key];
    s.addEventListener('change', () => {
      if (key === 'stat') state.stat = s.value === 'pooled' ? 'pooled' : 'mean';
      else state[key] = s.value;
      renderTable();
      renderScatter();
      renderCurves();
      renderSparsify();
    });
  }
  bindSelect('sel-dataset', 'dataset');
  bindSelect('sel-region', 'region');
  bindSelect('sel-tag', 'tag');
  bindSelect('sel-stat', 'stat');
  renderTable();
  renderScatter();
  renderCurves();
  renderSparsify();

  // ---------------------------------------------------------------- pairs
  // Every pair view carries its own legends: the disparity scale of this pair (shared by
  // the truth and every configuration), the error scale, hatching, no truth, regions.
  function pairLegend(p: PlxPairView): HTMLElement {
    const leg = el('div', { class: 'pairlegend' });
    if (p.scale) {
      const a = el('div');
      a.appendChild(el('div', { class: 'ci' }, 'disparity (' + data.dispMap + '), one scale for the truth and every configuration'));
      a.appendChild(legendBar(data.dispColors, p.scale[0], p.scale[1], 'px'));
      leg.appendChild(a);
    }
    const b = el('div');
    b.appendChild(el('div', { class: 'ci' }, '|error| (' + data.errMap + '), linear, clipped at ' + legendFmt(data.errorClip) + ' px'));
    b.appendChild(legendBar(data.errColors, 0, data.errorClip, 'px', 220, true));
    leg.appendChild(b);
    const keys = el('div', { class: 'keys' });
    keys.appendChild(swatchKey(null, 'hatch', 'no prediction'));
    keys.appendChild(swatchKey(data.noTruth, null, 'no truth'));
    leg.appendChild(keys);
    const rk = el('div', { class: 'keys' });
    rk.appendChild(el('span', null, 'regions:'));
    data.regionKeys.forEach((r) => rk.appendChild(swatchKey(r[1], null, r[0])));
    leg.appendChild(rk);
    return leg;
  }
  function failedTile(p: PlxPairView, j: PlxPairJobView): HTMLElement {
    // A failed job has no output to show; say so where its pictures would be.
    const f = el('figure', { class: 'nothumb' });
    const box = el('div', { class: 'failedbox' }, 'failed: no output');
    if (p.size) box.setAttribute('style', 'aspect-ratio:' + p.size[0] + '/' + p.size[1]);
    f.appendChild(box);
    f.appendChild(el('figcaption', null, j.label + ' \u2014 failed (scored as all-invalid)'));
    return f;
  }
  function figuresTable(p: PlxPairView): HTMLElement {
    const t = el('table', { class: 'figs' });
    const hr = el('tr');
    ['configuration', 'status', 'time ms', 'known coverage %', 'known epe px', 'visible epe px']
      .concat(data.rateNames.map((n) => 'visible ' + n + ' %'))
      .forEach((h) => hr.appendChild(el('th', { scope: 'col' }, h)));
    const head = el('thead');
    head.appendChild(hr);
    t.appendChild(head);
    const tb = el('tbody');
    p.jobs.forEach((j) => {
      const tr = el('tr');
      tr.appendChild(el('td', null, j.label));
      tr.appendChild(el('td', j.status === 'failed' ? { class: 'failed', title: j.error || '' } : null, j.status));
      tr.appendChild(el('td', null, fmt(j.time_ms)));
      tr.appendChild(el('td', null, fmt(j.fig.known.coverage)));
      tr.appendChild(el('td', null, fmt(j.fig.known.epe)));
      tr.appendChild(el('td', null, fmt(j.fig.visible.epe)));
      j.fig.visible.rates.forEach((v) => tr.appendChild(el('td', null, fmt(v))));
      tb.appendChild(tr);
      if (j.status === 'failed' && j.error) {
        const er = el('tr');
        er.appendChild(el('td', { colspan: String(6 + data.rateNames.length), class: 'failed' }, j.label + ': ' + j.error));
        tb.appendChild(er);
      }
    });
    t.appendChild(tb);
    return t;
  }
  function buildPair(p: PlxPairView, host: Element): void {
    const tiles = el('div', { class: 'tiles' });
    if (p.note) host.appendChild(el('p', { class: 'failed' }, p.note));
    if (p.left) tiles.appendChild(tile(p.left, 'left image', 'left image of ' + p.pair));
    if (p.truth) tiles.appendChild(tile(p.truth, 'truth disparity', 'truth disparity of ' + p.pair));
    if (p.regions) tiles.appendChild(tile(p.regions, 'regions', 'region map of ' + p.pair));
    p.jobs.forEach((j) => {
      if (j.disp) tiles.appendChild(tile(j.disp, j.label + ' \u2014 disparity', 'disparity of ' + j.label));
      if (j.err) tiles.appendChild(tile(j.err, j.label + ' \u2014 |error|', 'absolute error of ' + j.label));
      if (j.status === 'failed') tiles.appendChild(failedTile(p, j));
    });
    host.appendChild(pairLegend(p));
    const side = el('div', { class: 'side' });
    side.appendChild(figuresTable(p));
    const view = el('div', { class: 'pairview' });
    view.appendChild(tiles);
    view.appendChild(side);
    host.appendChild(view);
  }
  document.querySelectorAll('details.pair').forEach((d) => {
    d.addEventListener('toggle', () => {
      if (!(d as HTMLDetailsElement).open || d.getAttribute('data-built')) return;
      d.setAttribute('data-built', '1');
      buildPair(data.pairs[Number(d.getAttribute('data-index'))], d.querySelector('.pairbody')!);
    });
  });
})();
