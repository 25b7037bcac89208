/**
 * The report's pair views, built when a pair's fold-out opens: its tiles, the legends
 * it carries itself and its per-pair figures. Global script code like dom.ts.
 */
// Every pair view carries its own legends: the disparity scale of this pair (shared by
// the truth and every configuration), the error scale, hatching, no truth, regions.
function pairLegend(data: PlxReportHead, p: PlxPairView): HTMLElement {
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
function figuresTable(data: PlxReportHead, p: PlxPairView): HTMLElement {
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
function buildPair(data: PlxReportHead, p: PlxPairView, host: Element): void {
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
  host.appendChild(pairLegend(data, p));
  const side = el('div', { class: 'side' });
  side.appendChild(figuresTable(data, p));
  const view = el('div', { class: 'pairview' });
  view.appendChild(tiles);
  view.appendChild(side);
  host.appendChild(view);
}
