/**
 * A line chart with axes, grid, ticks and a legend, for the report's curve views
 * (sparsification, sub-pixel honesty). Global script code like dom.ts.
 */
interface ChartSeries {
  label: string;
  color: string;
  points: [number, number][];
  /** stroke-dasharray, e.g. '5 3'; '' = solid. */
  dash: string;
  /** Shown in the legend; series without it (e.g. a dashed companion) are not listed. */
  legend?: string;
}

interface ChartSpec {
  aria: string;
  xlab: string;
  ylab: string;
  x: [number, number];
  y: [number, number];
  xTicks: number[];
  xTickText: (v: number) => string;
  series: ChartSeries[];
}

function lineChart(spec: ChartSpec): SVGElement {
  const W = 520;
  const H = 320;
  const pad = { l: 50, r: 150, t: 14, b: 40 };
  const svg = sv('svg', { width: W, height: H, viewBox: '0 0 ' + W + ' ' + H, role: 'img', 'aria-label': spec.aria });
  axes(svg, W, H, pad, spec.xlab, spec.ylab);
  const [x0, x1] = spec.x;
  const [y0, y1raw] = spec.y;
  const y1 = y1raw > y0 ? y1raw : y0 + 1e-9;
  const X = (v: number): number => pad.l + ((v - x0) / (x1 - x0)) * (W - pad.l - pad.r);
  const Y = (v: number): number => H - pad.b - ((v - y0) / (y1 - y0)) * (H - pad.t - pad.b);
  ticks(y0, y1, 5).forEach((v) => {
    svg.appendChild(sv('line', { x1: pad.l - 4, y1: Y(v), x2: W - pad.r, y2: Y(v), stroke: '#e3e6ea' }));
    svg.appendChild(sv('text', { x: pad.l - 6, y: Y(v) + 4, 'text-anchor': 'end' }, fmt(v)));
  });
  spec.xTicks.forEach((v) => svg.appendChild(sv('text', { x: X(v), y: H - pad.b + 14, 'text-anchor': 'middle' }, spec.xTickText(v))));
  let row = 0;
  spec.series.forEach((s) => {
    if (s.points.length) {
      const points = s.points.map((p) => X(p[0]) + ',' + Y(p[1])).join(' ');
      svg.appendChild(sv('polyline', { points, fill: 'none', stroke: s.color, 'stroke-width': 2, 'stroke-dasharray': s.dash, 'data-label': s.label }));
    }
    if (s.legend === undefined) return;
    const ly = pad.t + 12 + row++ * 16;
    svg.appendChild(sv('rect', { x: W - pad.r + 10, y: ly - 9, width: 10, height: 10, fill: s.color }));
    svg.appendChild(sv('text', { x: W - pad.r + 24, y: ly }, s.legend.length > 24 ? s.legend.slice(0, 23) + '\u2026' : s.legend));
  });
  return svg;
}
