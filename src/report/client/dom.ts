/**
 * Helpers of the report's client script (report.ts): elements and SVG with attributes
 * and text set safely, number formats, axis ticks, legends and tiles. A plain script
 * compiled into the same file as report.ts, ahead of it.
 */
const SVGNS = 'http://www.w3.org/2000/svg';
type Attrs = Record<string, string | number> | null;

function el(tag: string, attrs?: Attrs, text?: unknown): HTMLElement {
  const e = document.createElement(tag);
  if (attrs) for (const k of Object.keys(attrs)) e.setAttribute(k, String(attrs[k]));
  if (text !== undefined && text !== null) e.textContent = String(text);
  return e;
}
function sv(tag: string, attrs?: Attrs, text?: unknown): SVGElement {
  const e = document.createElementNS(SVGNS, tag);
  if (attrs) for (const k of Object.keys(attrs)) e.setAttribute(k, String(attrs[k]));
  if (text !== undefined && text !== null) e.textContent = String(text);
  return e;
}
function fmt(x: number | null | undefined): string {
  if (x === null || x === undefined || !isFinite(x)) return '\u2013';
  const a = Math.abs(x);
  if (a === 0) return '0';
  if (a >= 1000) return x.toFixed(0);
  if (a >= 10) return x.toFixed(2);
  if (a >= 0.001) return x.toFixed(3);
  return x.toPrecision(2);
}
// Axis and legend labels: at most 6 (ticks) or 3 (legend ends) significant digits, no trailing zeros.
const tickFmt = (v: number): string => String(Number(v.toPrecision(6)));
const legendFmt = (v: number): string => String(Number(v.toPrecision(3)));
const byText = (a: string, b: string): number => (a < b ? -1 : a > b ? 1 : 0);

function clear(node: Element): void {
  while (node.firstChild) node.removeChild(node.firstChild);
}


interface Pad {
  l: number;
  r: number;
  t: number;
  b: number;
}
function axes(svg: SVGElement, W: number, H: number, pad: Pad, xlab: string, ylab: string): void {
  svg.appendChild(sv('line', { x1: pad.l, y1: H - pad.b, x2: W - pad.r, y2: H - pad.b, stroke: '#333' }));
  svg.appendChild(sv('line', { x1: pad.l, y1: pad.t, x2: pad.l, y2: H - pad.b, stroke: '#333' }));
  svg.appendChild(sv('text', { x: (pad.l + W - pad.r) / 2, y: H - 6, 'text-anchor': 'middle' }, xlab));
  const mid = (pad.t + H - pad.b) / 2;
  svg.appendChild(sv('text', { x: 12, y: mid, 'text-anchor': 'middle', transform: 'rotate(-90 12 ' + mid + ')' }, ylab));
}
function ticks(lo: number, hiIn: number, n: number): number[] {
  const hi = hiIn > lo ? hiIn : lo + 1;
  let step = Math.pow(10, Math.floor(Math.log10((hi - lo) / n)));
  const err = (hi - lo) / n / step;
  if (err >= 7.5) step *= 10;
  else if (err >= 3.5) step *= 5;
  else if (err >= 1.5) step *= 2;
  const out: number[] = [];
  for (let v = Math.ceil(lo / step) * step; v <= hi + 1e-9 * step; v += step) out.push(Number(v.toPrecision(12)));
  return out;
}
function logTicks(l0: number, l1: number): number[] {
  const out: number[] = [];
  for (let e = Math.floor(l0); e <= Math.ceil(l1); e++) {
    for (const m of [1, 2, 5]) {
      const v = m * Math.pow(10, e);
      const lv = Math.log10(v);
      if (lv >= l0 && lv <= l1) out.push(v);
    }
  }
  return out;
}


function legendBar(lut: string[], lo: number, hi: number, unit: string, width?: number, clipped?: boolean): SVGElement {
  const H = 34;
  const W = width || 220;
  const hiText = (clipped ? '\u2265 ' : '') + legendFmt(hi) + ' ' + unit;
  const svg = sv('svg', { width: W, height: H, viewBox: '0 0 ' + W + ' ' + H, role: 'img', 'aria-label': 'colour scale ' + legendFmt(lo) + ' ' + unit + ' to ' + hiText });
  const gid = 'g' + Math.random().toString(36).slice(2);
  const defs = sv('defs');
  const grad = sv('linearGradient', { id: gid, x1: 0, x2: 1, y1: 0, y2: 0 });
  lut.forEach((c, i) => grad.appendChild(sv('stop', { offset: (i / (lut.length - 1)) * 100 + '%', 'stop-color': c })));
  defs.appendChild(grad);
  svg.appendChild(defs);
  svg.appendChild(sv('rect', { x: 10, y: 2, width: W - 20, height: 12, fill: 'url(#' + gid + ')', stroke: '#999' }));
  svg.appendChild(sv('text', { x: 10, y: 28, 'text-anchor': 'start' }, legendFmt(lo) + ' ' + unit));
  svg.appendChild(sv('text', { x: W - 10, y: 28, 'text-anchor': 'end' }, hiText));
  return svg;
}
function tile(src: string, caption: string, alt: string): HTMLElement {
  const f = el('figure');
  f.appendChild(el('img', { src, alt, decoding: 'sync' }));
  f.appendChild(el('figcaption', null, caption));
  return f;
}
function swatchKey(bg: string | null, cls: string | null, label: string): HTMLElement {
  const s = el('span');
  const sw = el('span', { class: 'swatch' + (cls ? ' ' + cls : '') });
  if (bg) sw.setAttribute('style', 'background:' + bg);
  s.appendChild(sw);
  s.appendChild(document.createTextNode(label));
  return s;
}
