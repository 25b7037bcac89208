/**
 * The report's inline script (plain ES2019, no template literals, no innerHTML with
 * data: every text from the run goes through textContent or setAttribute).
 */
export const REPORT_JS = String.raw`
(function () {
  'use strict';
  var data = JSON.parse(document.getElementById('plx-data').textContent);
  var SVGNS = 'http://www.w3.org/2000/svg';
  var COLORS = ['#0072B2', '#E69F00', '#009E73', '#CC79A7', '#56B4E9', '#D55E00', '#F0E442', '#000000'];
  var state = { dataset: data.datasets[0] || '', tag: '', region: 'known', stat: 'mean', sort: 'epe', dir: 'asc' };

  function el(tag, attrs, text) {
    var e = document.createElement(tag);
    if (attrs) for (var k in attrs) if (Object.prototype.hasOwnProperty.call(attrs, k)) e.setAttribute(k, attrs[k]);
    if (text !== undefined && text !== null) e.textContent = String(text);
    return e;
  }
  function sv(tag, attrs, text) {
    var e = document.createElementNS(SVGNS, tag);
    if (attrs) for (var k in attrs) if (Object.prototype.hasOwnProperty.call(attrs, k)) e.setAttribute(k, String(attrs[k]));
    if (text !== undefined && text !== null) e.textContent = String(text);
    return e;
  }
  function fmt(x) {
    if (x === null || x === undefined || !isFinite(x)) return '\u2013';
    var a = Math.abs(x);
    if (a === 0) return '0';
    if (a >= 1000) return x.toFixed(0);
    if (a >= 10) return x.toFixed(2);
    if (a >= 0.001) return x.toFixed(3);
    return x.toPrecision(2);
  }
  // Axis and legend labels: at most 6 (ticks) or 3 (legend ends) significant digits, no trailing zeros.
  function tickFmt(v) { return String(Number(v.toPrecision(6))); }
  function legendFmt(v) { return String(Number(v.toPrecision(3))); }
  function cellsNow() { return ((data.summary[state.dataset] || {})[state.tag]) || {}; }
  function rowsNow() { return cellsNow()[state.region] || []; }
  function cell(row, metric) {
    var m = row.m[metric];
    if (!m) return { v: null, lo: null, hi: null, n: 0 };
    return state.stat === 'pooled' ? { v: m[4], lo: m[5], hi: m[6], n: m[3] } : { v: m[0], lo: m[1], hi: m[2], n: m[3] };
  }
  function betterAsc(metric) { return data.better[metric] !== 'higher'; }
  function sortKey(row, metric) {
    var v = cell(row, metric).v;
    if (v === null) return null;
    return data.better[metric] === 'abs' ? Math.abs(v) : v;
  }

  // ---------------------------------------------------------------- ranking table
  var table = document.getElementById('rank-table');
  var thead = table.querySelector('thead');
  var tbody = table.querySelector('tbody');
  var headRow = el('tr');
  var cols = [{ key: 'label', name: 'configuration' }, { key: 'n', name: 'pairs' }].concat(
    data.metrics.map(function (m) { return { key: m, name: m }; })
  );
  cols.forEach(function (c) {
    var th = el('th', { scope: 'col', 'data-col': c.key });
    if (c.key === 'label' || c.key === 'n') { th.textContent = c.name; }
    else {
      var b = el('button', { type: 'button', 'data-sort': c.key, title: 'Sort by ' + c.name }, c.name);
      th.appendChild(b);
      if (data.units[c.key]) th.appendChild(el('span', { class: 'unit' }, ' ' + data.units[c.key]));
      th.setAttribute('aria-sort', 'none');
      b.addEventListener('click', function () {
        if (state.sort === c.key) state.dir = state.dir === 'asc' ? 'desc' : 'asc';
        else { state.sort = c.key; state.dir = betterAsc(c.key) ? 'asc' : 'desc'; }
        renderTable();
        renderScatter();
      });
    }
    headRow.appendChild(th);
  });
  thead.appendChild(headRow);

  function renderTable() {
    var rows = rowsNow().slice();
    var key = state.sort;
    var sgn = state.dir === 'asc' ? 1 : -1;
    rows.sort(function (a, b) {
      var x = sortKey(a, key), y = sortKey(b, key);
      if (x === null && y === null) return a.label < b.label ? -1 : a.label > b.label ? 1 : 0;
      if (x === null) return 1;
      if (y === null) return -1;
      return sgn * (x - y) || (a.label < b.label ? -1 : a.label > b.label ? 1 : 0);
    });
    Array.prototype.forEach.call(thead.querySelectorAll('th[aria-sort]'), function (th) {
      th.setAttribute('aria-sort', th.getAttribute('data-col') === key ? (state.dir === 'asc' ? 'ascending' : 'descending') : 'none');
    });
    while (tbody.firstChild) tbody.removeChild(tbody.firstChild);
    rows.forEach(function (r) {
      var tr = el('tr', { 'data-label': r.label });
      tr.appendChild(el('th', { scope: 'row' }, r.label));
      var np = el('td', { title: 'pairs with a non-empty region; intervals resample ' + r.n_units + ' ' + r.unit + (r.n_units === 1 ? '' : 's') }, String(r.n_pairs));
      if (r.unit === 'group') np.appendChild(el('span', { class: 'ci' }, r.n_units + ' groups'));
      if (r.n_failed) np.appendChild(el('span', { class: 'ci failed' }, r.n_failed + ' failed'));
      tr.appendChild(np);
      data.metrics.forEach(function (m) {
        var c = cell(r, m);
        var td = el('td', { 'data-metric': m, 'data-value': c.v === null ? '' : String(c.v) }, fmt(c.v));
        if (c.lo !== null && c.hi !== null) td.appendChild(el('span', { class: 'ci', title: 'BCa ' + Math.round(data.level * 100) + ' % interval over ' + r.n_units + ' ' + r.unit + 's; mean uses ' + c.n + ' pairs' }, '[' + fmt(c.lo) + ', ' + fmt(c.hi) + '] n=' + c.n));
        else if (c.v !== null) td.appendChild(el('span', { class: 'ci' }, 'n=' + c.n));
        tr.appendChild(td);
      });
      tbody.appendChild(tr);
    });
  }

  // ---------------------------------------------------------------- charts
  function axes(svg, W, H, pad, xlab, ylab) {
    svg.appendChild(sv('line', { x1: pad.l, y1: H - pad.b, x2: W - pad.r, y2: H - pad.b, stroke: '#333' }));
    svg.appendChild(sv('line', { x1: pad.l, y1: pad.t, x2: pad.l, y2: H - pad.b, stroke: '#333' }));
    svg.appendChild(sv('text', { x: (pad.l + W - pad.r) / 2, y: H - 6, 'text-anchor': 'middle' }, xlab));
    var yl = sv('text', { x: 12, y: (pad.t + H - pad.b) / 2, 'text-anchor': 'middle', transform: 'rotate(-90 12 ' + (pad.t + H - pad.b) / 2 + ')' }, ylab);
    svg.appendChild(yl);
  }
  function ticks(lo, hi, n) {
    if (!(hi > lo)) { hi = lo + 1; }
    var step = Math.pow(10, Math.floor(Math.log10((hi - lo) / n)));
    var err = (hi - lo) / n / step;
    if (err >= 7.5) step *= 10; else if (err >= 3.5) step *= 5; else if (err >= 1.5) step *= 2;
    var out = [];
    for (var v = Math.ceil(lo / step) * step; v <= hi + 1e-9 * step; v += step) out.push(Number(v.toPrecision(12)));
    return out;
  }
  function logTicks(l0, l1) {
    var out = [];
    for (var e = Math.floor(l0); e <= Math.ceil(l1); e++) [1, 2, 5].forEach(function (m) { var v = m * Math.pow(10, e); var lv = Math.log10(v); if (lv >= l0 && lv <= l1) out.push(v); });
    return out;
  }
  function clear(node) { while (node.firstChild) node.removeChild(node.firstChild); }

  function renderScatter() {
    var host = document.getElementById('scatter');
    clear(host);
    var metric = (state.sort === 'time_ms' || state.sort === 'peak_mb') ? 'epe' : state.sort;
    var timeRows = cellsNow().known || [];
    var pts = [];
    rowsNow().forEach(function (r) {
      var tr = timeRows.filter(function (x) { return x.label === r.label; })[0];
      var t = tr && tr.m.time_ms ? tr.m.time_ms[0] : null;
      var y = cell(r, metric).v;
      if (t !== null && y !== null && isFinite(t) && isFinite(y)) pts.push({ label: r.label, t: t, y: data.better[metric] === 'abs' ? Math.abs(y) : y });
    });
    document.getElementById('scatter-caption').textContent = 'Accuracy (' + state.stat + ' ' + (data.better[metric] === 'abs' ? '|' + metric + '|' : metric) + ' on ' + state.region + ', ' + (data.units[metric] || '') + ') against mean match time per pair (ms). Filled points with the line: the Pareto front (no other configuration is both faster and more accurate).';
    var W = 520, H = 320, pad = { l: 58, r: 16, t: 14, b: 40 };
    var svg = sv('svg', { width: W, height: H, viewBox: '0 0 ' + W + ' ' + H, role: 'img', 'aria-label': 'accuracy against time' });
    axes(svg, W, H, pad, 'time per pair (ms)', metric + (data.units[metric] ? ' (' + data.units[metric] + ')' : ''));
    host.appendChild(svg);
    if (!pts.length) { svg.appendChild(sv('text', { x: W / 2, y: H / 2, 'text-anchor': 'middle' }, 'no timed configuration with this figure')); return; }
    var tmin = Math.min.apply(null, pts.map(function (p) { return p.t; })), tmax = Math.max.apply(null, pts.map(function (p) { return p.t; }));
    var ymin = Math.min.apply(null, pts.map(function (p) { return p.y; })), ymax = Math.max.apply(null, pts.map(function (p) { return p.y; }));
    var logx = tmin > 0 && tmax / tmin > 20;
    var fx = logx ? function (t) { return Math.log10(t); } : function (t) { return t; };
    var x0 = fx(tmin), x1 = fx(tmax); if (x1 - x0 < 1e-12) { x0 -= 0.5; x1 += 0.5; }
    var ypad = (ymax - ymin) * 0.08 || Math.abs(ymax) * 0.1 || 1; var y0 = Math.min(0, ymin - ypad), y1 = ymax + ypad;
    if (ymin - ypad > 0 && ymin > 0.5 * ymax) y0 = ymin - ypad;
    var xpad = (x1 - x0) * 0.08; x0 -= xpad; x1 += xpad;
    function X(t) { return pad.l + (fx(t) - x0) / (x1 - x0) * (W - pad.l - pad.r); }
    function Y(v) { return H - pad.b - (v - y0) / (y1 - y0) * (H - pad.t - pad.b); }
    ticks(y0, y1, 5).forEach(function (v) {
      svg.appendChild(sv('line', { x1: pad.l - 4, y1: Y(v), x2: W - pad.r, y2: Y(v), stroke: '#e3e6ea' }));
      svg.appendChild(sv('text', { x: pad.l - 6, y: Y(v) + 4, 'text-anchor': 'end' }, tickFmt(v)));
    });
    var xt = logx ? logTicks(x0, x1) : ticks(x0, x1, 5);
    xt.forEach(function (t) {
      if (logx && !(t > 0)) return;
      svg.appendChild(sv('text', { x: X(t), y: H - pad.b + 14, 'text-anchor': 'middle' }, tickFmt(t)));
    });
    var higher = data.better[metric] === 'higher';
    var sorted = pts.slice().sort(function (a, b) { return a.t - b.t || (higher ? b.y - a.y : a.y - b.y); });
    var front = [], best = null;
    sorted.forEach(function (p) { if (best === null || (higher ? p.y > best : p.y < best)) { front.push(p); best = p.y; } });
    if (front.length > 1) {
      svg.appendChild(sv('polyline', { points: front.map(function (p) { return X(p.t) + ',' + Y(p.y); }).join(' '), fill: 'none', stroke: '#0b5d8a', 'stroke-width': 1.5, 'stroke-dasharray': '5 3' }));
    }
    pts.forEach(function (p, i) {
      var onFront = front.indexOf(p) >= 0;
      var c = sv('circle', { cx: X(p.t), cy: Y(p.y), r: 5, fill: onFront ? '#0b5d8a' : '#fff', stroke: '#0b5d8a', 'stroke-width': 1.5, 'data-front': onFront ? '1' : '0' });
      c.appendChild(sv('title', null, p.label + ': ' + fmt(p.y) + ' at ' + fmt(p.t) + ' ms' + (onFront ? ' (Pareto front)' : '')));
      svg.appendChild(c);
      var right = X(p.t) > W * 0.62;
      svg.appendChild(sv('text', { x: X(p.t) + (right ? -7 : 7), y: Y(p.y) - 6, 'text-anchor': right ? 'end' : 'start' }, p.label.length > 28 ? p.label.slice(0, 27) + '\u2026' : p.label));
    });
  }

  function renderCurves() {
    var host = document.getElementById('curves');
    clear(host);
    var th = data.thresholds;
    var W = 520, H = 320, pad = { l: 50, r: 150, t: 14, b: 40 };
    var svg = sv('svg', { width: W, height: H, viewBox: '0 0 ' + W + ' ' + H, role: 'img', 'aria-label': 'bad-pixel rate against threshold' });
    axes(svg, W, H, pad, 'threshold (px)', state.stat + ' rate (%)');
    host.appendChild(svg);
    var tmax = Math.max.apply(null, th);
    function X(t) { return pad.l + t / tmax * (W - pad.l - pad.r); }
    function Y(v) { return H - pad.b - v / 100 * (H - pad.t - pad.b); }
    [0, 20, 40, 60, 80, 100].forEach(function (v) {
      svg.appendChild(sv('line', { x1: pad.l - 4, y1: Y(v), x2: W - pad.r, y2: Y(v), stroke: '#e3e6ea' }));
      svg.appendChild(sv('text', { x: pad.l - 6, y: Y(v) + 4, 'text-anchor': 'end' }, String(v)));
    });
    th.forEach(function (t) { svg.appendChild(sv('text', { x: X(t), y: H - pad.b + 14, 'text-anchor': 'middle' }, String(t))); });
    rowsNow().forEach(function (r, i) {
      var col = COLORS[i % COLORS.length];
      var pts = [];
      th.forEach(function (t, k) {
        var v = cell(r, data.rateNames[k]).v;
        if (v !== null) pts.push([X(t), Y(v)]);
      });
      if (!pts.length) return;
      svg.appendChild(sv('polyline', { points: pts.map(function (p) { return p[0] + ',' + p[1]; }).join(' '), fill: 'none', stroke: col, 'stroke-width': 2, 'stroke-dasharray': i >= COLORS.length ? '4 2' : '' }));
      pts.forEach(function (p) { svg.appendChild(sv('rect', { x: p[0] - 3, y: p[1] - 3, width: 6, height: 6, fill: col })); });
      var ly = pad.t + 12 + i * 16;
      svg.appendChild(sv('rect', { x: W - pad.r + 10, y: ly - 9, width: 10, height: 10, fill: col }));
      svg.appendChild(sv('text', { x: W - pad.r + 24, y: ly }, r.label.length > 20 ? r.label.slice(0, 19) + '\u2026' : r.label));
    });
  }

  // ---------------------------------------------------------------- controls
  function bindSelect(id, key) {
    var s = document.getElementById(id);
    if (!s) return;
    s.value = state[key];
    s.addEventListener('change', function () { state[key] = s.value; renderTable(); renderScatter(); renderCurves(); });
  }
  bindSelect('sel-dataset', 'dataset');
  bindSelect('sel-region', 'region');
  bindSelect('sel-tag', 'tag');
  bindSelect('sel-stat', 'stat');
  renderTable();
  renderScatter();
  renderCurves();

  // ---------------------------------------------------------------- pairs
  function legendBar(lut, lo, hi, unit, width, clipped) {
    var H = 34, W = width || 220;
    var hiText = (clipped ? '\u2265 ' : '') + legendFmt(hi) + ' ' + unit;
    var svg = sv('svg', { width: W, height: H, viewBox: '0 0 ' + W + ' ' + H, role: 'img', 'aria-label': 'colour scale ' + legendFmt(lo) + ' ' + unit + ' to ' + hiText });
    var gid = 'g' + Math.random().toString(36).slice(2);
    var defs = sv('defs');
    var grad = sv('linearGradient', { id: gid, x1: 0, x2: 1, y1: 0, y2: 0 });
    lut.forEach(function (c, i) { grad.appendChild(sv('stop', { offset: (i / (lut.length - 1) * 100) + '%', 'stop-color': c })); });
    defs.appendChild(grad); svg.appendChild(defs);
    svg.appendChild(sv('rect', { x: 10, y: 2, width: W - 20, height: 12, fill: 'url(#' + gid + ')', stroke: '#999' }));
    svg.appendChild(sv('text', { x: 10, y: 28, 'text-anchor': 'start' }, legendFmt(lo) + ' ' + unit));
    svg.appendChild(sv('text', { x: W - 10, y: 28, 'text-anchor': 'end' }, hiText));
    return svg;
  }
  function tile(src, caption, alt) {
    var f = el('figure');
    var img = el('img', { src: src, alt: alt, decoding: 'sync' });
    f.appendChild(img);
    f.appendChild(el('figcaption', null, caption));
    return f;
  }
  function swatchKey(bg, cls, label) {
    var s = el('span');
    var sw = el('span', { class: 'swatch' + (cls ? ' ' + cls : '') });
    if (bg) sw.setAttribute('style', 'background:' + bg);
    s.appendChild(sw);
    s.appendChild(document.createTextNode(label));
    return s;
  }
  // Every pair view carries its own legends: the disparity scale of this pair (shared by
  // the truth and every configuration), the error scale, hatching, no truth, regions.
  function pairLegend(p) {
    var leg = el('div', { class: 'pairlegend' });
    if (p.scale) {
      var a = el('div');
      a.appendChild(el('div', { class: 'ci' }, 'disparity (' + data.dispMap + '), one scale for the truth and every configuration'));
      a.appendChild(legendBar(data.dispColors, p.scale[0], p.scale[1], 'px'));
      leg.appendChild(a);
    }
    var b = el('div');
    b.appendChild(el('div', { class: 'ci' }, '|error| (' + data.errMap + '), linear, clipped at ' + legendFmt(data.errorClip) + ' px'));
    b.appendChild(legendBar(data.errColors, 0, data.errorClip, 'px', 220, true));
    leg.appendChild(b);
    var keys = el('div', { class: 'keys' });
    keys.appendChild(swatchKey(null, 'hatch', 'no prediction'));
    keys.appendChild(swatchKey(data.noTruth, null, 'no truth'));
    leg.appendChild(keys);
    var rk = el('div', { class: 'keys' });
    rk.appendChild(el('span', null, 'regions:'));
    data.regionKeys.forEach(function (r) { rk.appendChild(swatchKey(r[1], null, r[0])); });
    leg.appendChild(rk);
    return leg;
  }
  function buildPair(p, host) {
    var tiles = el('div', { class: 'tiles' });
    if (p.note) host.appendChild(el('p', { class: 'failed' }, p.note));
    if (p.left) tiles.appendChild(tile(p.left, 'left image', 'left image of ' + p.pair));
    if (p.truth) tiles.appendChild(tile(p.truth, 'truth disparity', 'truth disparity of ' + p.pair));
    if (p.regions) tiles.appendChild(tile(p.regions, 'regions', 'region map of ' + p.pair));
    p.jobs.forEach(function (j) {
      if (j.disp) tiles.appendChild(tile(j.disp, j.label + ' \u2014 disparity', 'disparity of ' + j.label));
      if (j.err) tiles.appendChild(tile(j.err, j.label + ' \u2014 |error|', 'absolute error of ' + j.label));
      if (j.status === 'failed') {
        // A failed job has no output to show; say so where its pictures would be.
        var f = el('figure', { class: 'nothumb' });
        var box = el('div', { class: 'failedbox' }, 'failed: no output');
        if (p.size) box.setAttribute('style', 'aspect-ratio:' + p.size[0] + '/' + p.size[1]);
        f.appendChild(box);
        f.appendChild(el('figcaption', null, j.label + ' \u2014 failed (scored as all-invalid)'));
        tiles.appendChild(f);
      }
    });
    var side = el('div', { class: 'side' });
    host.appendChild(pairLegend(p));
    var t = el('table', { class: 'figs' });
    var hr = el('tr');
    ['configuration', 'status', 'time ms', 'known coverage %', 'known epe px', 'visible epe px'].concat(data.rateNames.map(function (n) { return 'visible ' + n + ' %'; })).forEach(function (h) { hr.appendChild(el('th', { scope: 'col' }, h)); });
    var thead = el('thead'); thead.appendChild(hr); t.appendChild(thead);
    var tb = el('tbody');
    p.jobs.forEach(function (j) {
      var tr = el('tr');
      tr.appendChild(el('td', null, j.label));
      var st = el('td', j.status === 'failed' ? { class: 'failed', title: j.error || '' } : null, j.status);
      tr.appendChild(st);
      tr.appendChild(el('td', null, fmt(j.time_ms)));
      tr.appendChild(el('td', null, fmt(j.fig.known.coverage)));
      tr.appendChild(el('td', null, fmt(j.fig.known.epe)));
      tr.appendChild(el('td', null, fmt(j.fig.visible.epe)));
      j.fig.visible.rates.forEach(function (v) { tr.appendChild(el('td', null, fmt(v))); });
      tb.appendChild(tr);
      if (j.status === 'failed' && j.error) {
        var er = el('tr'); var td = el('td', { colspan: String(6 + data.rateNames.length), class: 'failed' }, j.label + ': ' + j.error); er.appendChild(td); tb.appendChild(er);
      }
    });
    t.appendChild(tb);
    side.appendChild(t);
    var view = el('div', { class: 'pairview' });
    view.appendChild(tiles); view.appendChild(side);
    host.appendChild(view);
  }
  Array.prototype.forEach.call(document.querySelectorAll('details.pair'), function (d) {
    d.addEventListener('toggle', function () {
      if (!d.open || d.getAttribute('data-built')) return;
      d.setAttribute('data-built', '1');
      buildPair(data.pairs[Number(d.getAttribute('data-index'))], d.querySelector('.pairbody'));
    });
  });
})();
`;
