/**
 * Is a pair really rectified, and do its cameras agree photometrically? Estimated from
 * the two images alone (no truth):
 *
 * 1. Points: a grid of candidates in the left image, kept where the window's structure
 *    tensor has a large smaller eigenvalue (texture in both directions, so a vertical
 *    offset is observable), the strongest first.
 * 2. Match: for each point, normalized cross-correlation (ZNCC) of a window against the
 *    right image over the dataset's disparity range and a small vertical search
 *    (±`searchPx`); kept when the best score is high.
 * 3. Refine: Gauss-Newton on L(p) = a R(p + t) + b over a larger window, t = (tx, ty)
 *    with R sampled bilinearly, a and b absorbing any gain and offset difference. ty is
 *    the point's vertical offset: positive when the right image's content sits lower.
 *    Windows the model leaves more than 10 % of their variance unexplained are dropped.
 * 4. Fit: ty = s + r (xr - cx) + k (y - cy) by least squares, points whose residual is
 *    beyond 3 robust standard deviations (1.4826 MAD, at least 0.05 px) dropped, three
 *    rounds. A rotation of the right image by theta (counter-clockwise on screen) about
 *    its centre moves content vertically by -theta (xr - cx): rotation = -r.
 * 5. Photometry: the right patch means against the left ones (saturated patches left
 *    out) fitted as muR = gain muL + offset, with the same trimming. Over a narrow
 *    range of grey levels gain and offset trade against each other, so the range the
 *    fit rests on is reported too (`dataset check` judges the brightness difference the
 *    fit predicts at its ends).
 *
 * Reported: vshift_px = the median of the kept offsets, vshift_spread_px = half the
 * range of the fitted field over the image (the part rotation and scale add; a term
 * within two standard errors of zero adds none),
 * rotation_mrad, the scale term, gain (right over left) and offset (grey levels).
 */

export interface RectificationOptions {
  /** Inclusive disparity search range [min, max] px. */
  minDisparity: number;
  maxDisparity: number;
  /** Vertical search either side, px (default 4). */
  searchPx?: number;
  /** Points to match at most (default 400). */
  maxPoints?: number;
}

export interface RectificationEstimate {
  /** Points matched and kept in the fit. */
  points: number;
  vshift_px: number | null;
  vshift_spread_px: number | null;
  /** Robust standard deviation of the points about the fit, px. */
  vshift_noise_px: number | null;
  rotation_mrad: number | null;
  /** Vertical scale difference, % (ty grows by this share of y - cy). */
  vscale_pct: number | null;
  /** Right over left. */
  gain: number | null;
  /** Right minus gain x left, grey levels (0-255 scale). */
  offset: number | null;
  /** 5th and 95th percentile of the left patch means the photometric fit rests on (grey levels). */
  grey_range: [number, number] | null;
}

const MATCH_HALF = 4;
const REFINE_HALF = 7;
const GRID_STEP = 8;
const MIN_ZNCC = 0.8;
const SATURATED = 250;
/**
 * Windows a translation (with gain and offset) does not explain are left out: above this
 * share (10 %) of the window's variance left over they straddle a depth edge or a reflection,
 * whose content moves differently in the two views and biases the offset.
 */
const MAX_MISFIT = 0.1;

interface Plane {
  data: Float32Array;
  w: number;
  h: number;
}

/** Smaller eigenvalue of the structure tensor over the window at (x, y). */
function cornerness(img: Plane, x: number, y: number, half: number): number {
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  const { data, w } = img;
  for (let v = y - half; v <= y + half; v++) {
    for (let u = x - half; u <= x + half; u++) {
      const gx = (data[v * w + u + 1] - data[v * w + u - 1]) / 2;
      const gy = (data[(v + 1) * w + u] - data[(v - 1) * w + u]) / 2;
      sxx += gx * gx;
      syy += gy * gy;
      sxy += gx * gy;
    }
  }
  const tr = (sxx + syy) / 2;
  return tr - Math.sqrt(((sxx - syy) / 2) ** 2 + sxy * sxy);
}

function pickPoints(left: Plane, margin: number, maxPoints: number): [number, number][] {
  const cands: { x: number; y: number; c: number }[] = [];
  for (let y = margin; y < left.h - margin; y += GRID_STEP) {
    for (let x = margin; x < left.w - margin; x += GRID_STEP) cands.push({ x, y, c: cornerness(left, x, y, MATCH_HALF) });
  }
  const n = (2 * MATCH_HALF + 1) ** 2;
  // Texture of a few grey levels per pixel in both directions (0.5 grey level^2 per pixel on average).
  const kept = cands.filter((p) => p.c > 0.5 * n).sort((a, b) => b.c - a.c);
  return kept.slice(0, maxPoints).map((p) => [p.x, p.y]);
}

/** ZNCC of the left window at (x, y) and the right window at (xr, yr), integer positions. */
function zncc(l: Plane, r: Plane, at: { x: number; y: number; xr: number; yr: number }, half: number): number {
  const { x, y, xr, yr } = at;
  let sl = 0;
  let sr = 0;
  let sll = 0;
  let srr = 0;
  let slr = 0;
  for (let v = -half; v <= half; v++) {
    const lo = (y + v) * l.w + x;
    const ro = (yr + v) * r.w + xr;
    for (let u = -half; u <= half; u++) {
      const a = l.data[lo + u];
      const b = r.data[ro + u];
      sl += a;
      sr += b;
      sll += a * a;
      srr += b * b;
      slr += a * b;
    }
  }
  const n = (2 * half + 1) ** 2;
  const cov = slr - (sl * sr) / n;
  const vl = sll - (sl * sl) / n;
  const vr = srr - (sr * sr) / n;
  return vl > 0 && vr > 0 ? cov / Math.sqrt(vl * vr) : -1;
}

function bilinear(img: Plane, x: number, y: number): number {
  const x0 = Math.floor(x);
  const y0 = Math.floor(y);
  const fx = x - x0;
  const fy = y - y0;
  const i = y0 * img.w + x0;
  const d = img.data;
  return (d[i] * (1 - fx) + d[i + 1] * fx) * (1 - fy) + (d[i + img.w] * (1 - fx) + d[i + img.w + 1] * fx) * fy;
}

/** Solve the 4x4 system A z = g (Gaussian elimination with partial pivoting); null when singular. */
function solve4(A: number[], g: number[]): number[] | null {
  const m = A.slice();
  const b = g.slice();
  for (let c = 0; c < 4; c++) {
    let p = c;
    for (let r = c + 1; r < 4; r++) if (Math.abs(m[r * 4 + c]) > Math.abs(m[p * 4 + c])) p = r;
    if (Math.abs(m[p * 4 + c]) < 1e-12) return null;
    for (let k = 0; k < 4; k++) [m[c * 4 + k], m[p * 4 + k]] = [m[p * 4 + k], m[c * 4 + k]];
    [b[c], b[p]] = [b[p], b[c]];
    for (let r = c + 1; r < 4; r++) {
      const f = m[r * 4 + c] / m[c * 4 + c];
      for (let k = c; k < 4; k++) m[r * 4 + k] -= f * m[c * 4 + k];
      b[r] -= f * b[c];
    }
  }
  const z = [0, 0, 0, 0];
  for (let r = 3; r >= 0; r--) {
    let s = b[r];
    for (let k = r + 1; k < 4; k++) s -= m[r * 4 + k] * z[k];
    z[r] = s / m[r * 4 + r];
  }
  return z;
}

/** Gauss-Newton refinement of (tx, ty, a, b) in L(p) = a R(p + t) + b; null when it leaves the image or diverges. */
function refine(l: Plane, r: Plane, grad: { gx: Plane; gy: Plane }, start: { x: number; y: number; tx0: number; ty0: number }): { tx: number; ty: number; misfit: number } | null {
  const { gx, gy } = grad;
  const { x, y, tx0, ty0 } = start;
  let tx = tx0;
  let ty = ty0;
  let a = 1;
  let b = 0;
  const h = REFINE_HALF;
  let sse = 0;
  let sl = 0;
  let sll = 0;
  for (let it = 0; it < 10; it++) {
    sse = 0;
    sl = 0;
    sll = 0;
    if (x + tx - h < 1 || x + tx + h > r.w - 2 || y + ty - h < 1 || y + ty + h > r.h - 2) return null;
    const A = new Array<number>(16).fill(0);
    const g = [0, 0, 0, 0];
    for (let v = -h; v <= h; v++) {
      for (let u = -h; u <= h; u++) {
        const px = x + u + tx;
        const py = y + v + ty;
        const rv = bilinear(r, px, py);
        const lv = l.data[(y + v) * l.w + x + u];
        const res = lv - (a * rv + b);
        sse += res * res;
        sl += lv;
        sll += lv * lv;
        const J = [a * bilinear(gx, px, py), a * bilinear(gy, px, py), rv, 1];
        for (let i = 0; i < 4; i++) {
          g[i] += J[i] * res;
          for (let k = 0; k < 4; k++) A[i * 4 + k] += J[i] * J[k];
        }
      }
    }
    const z = solve4(A, g);
    if (!z) return null;
    tx += z[0];
    ty += z[1];
    a += z[2];
    b += z[3];
    if (Math.abs(tx - tx0) > 2 || Math.abs(ty - ty0) > 2) return null;
    if (Math.abs(z[0]) < 1e-4 && Math.abs(z[1]) < 1e-4) break;
  }
  const n = (2 * h + 1) ** 2;
  const varL = sll / n - (sl / n) ** 2;
  // What a translation with gain and offset leaves unexplained, as a share of the window's variance.
  return { tx, ty, misfit: varL > 0 ? sse / n / varL : 1 };
}

function gradients(img: Plane): { gx: Plane; gy: Plane } {
  const { w, h, data } = img;
  const gx = new Float32Array(w * h);
  const gy = new Float32Array(w * h);
  for (let y = 1; y < h - 1; y++) {
    for (let x = 1; x < w - 1; x++) {
      const i = y * w + x;
      gx[i] = (data[i + 1] - data[i - 1]) / 2;
      gy[i] = (data[i + w] - data[i - w]) / 2;
    }
  }
  return { gx: { data: gx, w, h }, gy: { data: gy, w, h } };
}

function median(xs: readonly number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/**
 * Least squares of y on the columns of X (rows of features), dropping points beyond 3
 * robust standard deviations, three rounds. Returns the coefficients, the kept rows and
 * the robust standard deviation of their residuals.
 */
export function robustFit(X: readonly number[][], y: readonly number[], floor: number): { coef: number[]; kept: number[]; sd: number } | null {
  let kept = y.map((_, i) => i);
  let coef: number[] = [];
  let sd = 0;
  for (let round = 0; round < 4; round++) {
    const p = X[0]?.length ?? 0;
    if (kept.length <= p) return null;
    const A = new Array<number>(p * p).fill(0);
    const g = new Array<number>(p).fill(0);
    for (const i of kept) {
      for (let a = 0; a < p; a++) {
        g[a] += X[i][a] * y[i];
        for (let b = 0; b < p; b++) A[a * p + b] += X[i][a] * X[i][b];
      }
    }
    const z = solveSmall(A, g, p);
    if (!z) return null;
    coef = z;
    const res = y.map((v, i) => v - X[i].reduce((s, x, k) => s + x * coef[k], 0));
    const centre = median(kept.map((i) => res[i]));
    const mad = median(kept.map((i) => Math.abs(res[i] - centre)));
    sd = 1.4826 * mad;
    if (round === 3) break;
    const limit = Math.max(3 * sd, floor);
    const next = y.map((_, i) => i).filter((i) => Math.abs(res[i]) <= limit);
    if (next.length === kept.length) break;
    kept = next;
  }
  return { coef, kept, sd };
}

/** Gaussian elimination for p <= 4 (pads to 4 unknowns). */
function solveSmall(A: number[], g: number[], p: number): number[] | null {
  const M = new Array<number>(16).fill(0);
  const b = [0, 0, 0, 0];
  for (let i = 0; i < 4; i++) M[i * 4 + i] = 1;
  for (let i = 0; i < p; i++) {
    b[i] = g[i];
    for (let k = 0; k < p; k++) M[i * 4 + k] = A[i * p + k];
  }
  const z = solve4(M, b);
  return z ? z.slice(0, p) : null;
}

/** Standard errors of least-squares coefficients: sd * sqrt(diag((X'X)^-1)). */
function standardErrors(X: readonly number[][], sd: number): number[] {
  const p = X[0].length;
  const A = new Array<number>(p * p).fill(0);
  for (const row of X) for (let a = 0; a < p; a++) for (let b = 0; b < p; b++) A[a * p + b] += row[a] * row[b];
  return Array.from({ length: p }, (_, k) => {
    const col = solveSmall(A, Array.from({ length: p }, (_, i) => (i === k ? 1 : 0)), p);
    return col ? sd * Math.sqrt(Math.max(0, col[k])) : Infinity;
  });
}

interface Match {
  x: number;
  y: number;
  xr: number;
  ty: number;
  muL: number;
  muR: number;
  saturated: boolean;
}

function windowMean(img: Plane, x: number, y: number, half: number): { mean: number; max: number } {
  let s = 0;
  let max = -Infinity;
  for (let v = -half; v <= half; v++) {
    for (let u = -half; u <= half; u++) {
      const val = img.data[(y + v) * img.w + x + u];
      s += val;
      if (val > max) max = val;
    }
  }
  return { mean: s / (2 * half + 1) ** 2, max };
}

function matchPoint(l: Plane, r: Plane, grad: { gx: Plane; gy: Plane }, x: number, y: number, opts: Required<RectificationOptions>): Match | null {
  const R = opts.searchPx;
  const h = MATCH_HALF;
  let best = -Infinity;
  let bd = 0;
  let bdy = 0;
  for (let d = opts.minDisparity; d <= opts.maxDisparity; d++) {
    const xr = x - d;
    if (xr - REFINE_HALF - 3 < 0 || xr + REFINE_HALF + 3 >= r.w) continue;
    for (let dy = -R; dy <= R; dy++) {
      const s = zncc(l, r, { x, y, xr, yr: y + dy }, h);
      if (s > best) {
        best = s;
        bd = d;
        bdy = dy;
      }
    }
  }
  if (best < MIN_ZNCC) return null;
  const t = refine(l, r, grad, { x, y, tx0: -bd, ty0: bdy });
  if (!t || t.misfit > MAX_MISFIT) return null;
  const wl = windowMean(l, x, y, REFINE_HALF);
  const wr = windowMean(r, Math.round(x + t.tx), Math.round(y + t.ty), REFINE_HALF);
  return { x, y, xr: x + t.tx, ty: t.ty, muL: wl.mean, muR: wr.mean, saturated: wl.max >= SATURATED || wr.max >= SATURATED };
}

/** The estimate of a pair it could not be made for. */
export const NO_ESTIMATE: RectificationEstimate = { points: 0, vshift_px: null, vshift_spread_px: null, vshift_noise_px: null, rotation_mrad: null, vscale_pct: null, gain: null, offset: null, grey_range: null };

function percentile(xs: readonly number[], q: number): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.max(0, Math.round(q * (s.length - 1))))];
}

/** Estimate the pair's vertical misalignment and photometric difference from its luminance images (0-255). */
export function estimateRectification(left: Float32Array, right: Float32Array, w: number, h: number, options: RectificationOptions): RectificationEstimate {
  const opts: Required<RectificationOptions> = { searchPx: 4, maxPoints: 400, ...options };
  const l = { data: left, w, h };
  const r = { data: right, w, h };
  const margin = REFINE_HALF + opts.searchPx + 4;
  if (w <= 2 * margin || h <= 2 * margin) return NO_ESTIMATE;
  const grad = gradients(r);
  const matches = pickPoints(l, margin, opts.maxPoints)
    .map(([x, y]) => matchPoint(l, r, grad, x, y, opts))
    .filter((m): m is Match => m !== null);
  if (matches.length < 8) return { ...NO_ESTIMATE, points: matches.length };
  const cx = (w - 1) / 2;
  const cy = (h - 1) / 2;
  const fit = robustFit(
    matches.map((m) => [1, m.xr - cx, m.y - cy]),
    matches.map((m) => m.ty),
    0.05,
  );
  if (!fit) return { ...NO_ESTIMATE, points: matches.length };
  const [, rx, ky] = fit.coef as [number, number, number];
  const [seR, seK] = standardErrors(fit.kept.map((i) => [1, matches[i].xr - cx, matches[i].y - cy]), fit.sd).slice(1) as [number, number];
  // Terms within two standard errors of zero add no spread (few or clustered points fit noise).
  const rs = Math.abs(rx) > 2 * seR ? rx : 0;
  const ks = Math.abs(ky) > 2 * seK ? ky : 0;
  // The fitted field's range over the image comes from its corners (it is affine).
  const corners = [
    [-cx, -cy],
    [cx, -cy],
    [-cx, cy],
    [cx, cy],
  ].map(([dx, dy]) => rs * dx + ks * dy);
  const photo = matches.filter((m) => !m.saturated);
  const pfit = photo.length >= 8 ? robustFit(photo.map((m) => [1, m.muL]), photo.map((m) => m.muR), 0.5) : null;
  return {
    points: fit.kept.length,
    vshift_px: median(fit.kept.map((i) => matches[i].ty)),
    vshift_spread_px: (Math.max(...corners) - Math.min(...corners)) / 2,
    vshift_noise_px: fit.sd,
    rotation_mrad: -rx * 1000,
    vscale_pct: ky * 100,
    gain: pfit ? pfit.coef[1] : null,
    offset: pfit ? pfit.coef[0] : null,
    grey_range: pfit ? [percentile(pfit.kept.map((i) => photo[i].muL), 0.05), percentile(pfit.kept.map((i) => photo[i].muL), 0.95)] : null,
  };
}
