/**
 * Small descriptive statistics with care for accuracy: two-pass mean and
 * sample standard deviation (the mean is corrected by the mean residual, which keeps
 * full precision on data with a large common offset such as NIST's NumAcc sets).
 */
/** Arithmetic mean, two-pass corrected; NaN for an empty list. */
export function mean(xs: ArrayLike<number>): number {
  const n = xs.length;
  if (n === 0) return NaN;
  let s = 0;
  for (let i = 0; i < n; i++) s += xs[i];
  const m0 = s / n;
  let r = 0;
  for (let i = 0; i < n; i++) r += xs[i] - m0;
  return m0 + r / n;
}

/** Sample standard deviation (n - 1 in the denominator), two-pass; NaN below 2 values. */
export function sampleSd(xs: ArrayLike<number>): number {
  const n = xs.length;
  if (n < 2) return NaN;
  const m = mean(xs);
  let ss = 0;
  let sc = 0;
  for (let i = 0; i < n; i++) {
    const d = xs[i] - m;
    ss += d * d;
    sc += d;
  }
  // Corrected two-pass formula (Chan, Golub & LeVeque 1983).
  return Math.sqrt((ss - (sc * sc) / n) / (n - 1));
}

export { quantileSorted } from '../core/quantile.js';

/**
 * Standard normal CDF, Hart's double-precision algorithm 5666 as given by G. West,
 * "Better approximations to cumulative normal functions" (Wilmott, 2005); absolute
 * error about 1e-15. simple-statistics' errorFunction is not used here: its error is
 * about 1.5e-8 (it returns 0.49999998 for Phi(0)).
 */
export function normalCdf(x: number): number {
  if (Number.isNaN(x)) return NaN;
  const ax = Math.abs(x);
  let c: number;
  if (ax > 37) c = 0;
  else {
    const e = Math.exp((-ax * ax) / 2);
    if (ax < 7.07106781186547) {
      let b = 3.52624965998911e-2 * ax + 0.700383064443688;
      b = b * ax + 6.37396220353165;
      b = b * ax + 33.912866078383;
      b = b * ax + 112.079291497871;
      b = b * ax + 221.213596169931;
      b = b * ax + 220.206867912376;
      c = e * b;
      b = 8.83883476483184e-2 * ax + 1.75566716318264;
      b = b * ax + 16.064177579207;
      b = b * ax + 86.7807322029461;
      b = b * ax + 296.564248779674;
      b = b * ax + 637.333633378831;
      b = b * ax + 793.826512519948;
      b = b * ax + 440.413735824752;
      c /= b;
    } else {
      let b = ax + 0.65;
      b = ax + 4 / b;
      b = ax + 3 / b;
      b = ax + 2 / b;
      b = ax + 1 / b;
      c = e / b / 2.506628274631;
    }
  }
  return x > 0 ? 1 - c : c;
}

/**
 * Standard normal quantile (probit), P. J. Acklam's rational approximation
 * (relative error below 1.2e-9) refined by one Halley step on normalCdf.
 * simple-statistics' `probit` is not used: it gives
 * 1.95716 for p = 0.975 (true 1.959964), too coarse for interval endpoints.
 */
export function normalQuantile(p: number): number {
  const x = acklam(p);
  if (!Number.isFinite(x)) return x;
  const e = normalCdf(x) - p;
  const u = e * Math.sqrt(2 * Math.PI) * Math.exp((x * x) / 2);
  return x - u / (1 + (x * u) / 2);
}

function acklam(p: number): number {
  if (!(p > 0)) return p === 0 ? -Infinity : NaN;
  if (!(p < 1)) return p === 1 ? Infinity : NaN;
  const a = [-3.969683028665376e1, 2.209460984245205e2, -2.759285104469687e2, 1.38357751867269e2, -3.066479806614716e1, 2.506628277459239];
  const b = [-5.447609879822406e1, 1.615858368580409e2, -1.556989798598866e2, 6.680131188771972e1, -1.328068155288572e1];
  const c = [-7.784894002430293e-3, -3.223964580411365e-1, -2.400758277161838, -2.549732539343734, 4.374664141464968, 2.938163982698783];
  const d = [7.784695709041462e-3, 3.224671290700398e-1, 2.445134137142996, 3.754408661907416];
  const plow = 0.02425;
  if (p < plow) {
    const q = Math.sqrt(-2 * Math.log(p));
    return (((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) / ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1);
  }
  if (p > 1 - plow) {
    const q = Math.sqrt(-2 * Math.log(1 - p));
    return -(((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) / ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1);
  }
  const q = p - 0.5;
  const r = q * q;
  return ((((((a[0] * r + a[1]) * r + a[2]) * r + a[3]) * r + a[4]) * r + a[5]) * q) / (((((b[0] * r + b[1]) * r + b[2]) * r + b[3]) * r + b[4]) * r + 1);
}
