/**
 * The smallest change a set of pairs can tell from noise, for a paired mean.
 *
 * With n units (pairs, or groups), a standard deviation s of their paired differences,
 * a two-sided level alpha and a power 1 - beta, the normal approximation gives
 *
 *   smallest detectable change  delta = (z(1 - alpha/2) + z(1 - beta)) * s / sqrt(n)
 *   units needed for a change A  n    = ceil(((z(1 - alpha/2) + z(1 - beta)) * s / A)^2)
 *
 * where z is the standard normal quantile (simple-statistics' probit). A true change
 * of delta is then called (its interval excludes zero) in about 1 - beta of datasets of
 * this size; a change well below it mostly is not, so a gate whose allowance is below
 * delta passes or fails largely by chance.
 *
 * From one run alone (the report) there are no paired differences: s is then the
 * spread of the figure over pairs, which equals the spread of the differences when the
 * two runs' errors on a pair correlate with 0.5 (a stated assumption, not a measurement).
 */
import { probit, sampleStandardDeviation } from 'simple-statistics';

/** Two-sided level and power used by compare and the report. */
export const DEFAULT_ALPHA = 0.05;
export const DEFAULT_POWER = 0.8;

export interface Detectability {
  /** Units the spread was measured on. */
  n: number;
  /** Sample standard deviation of the per-unit values (differences, or figures for one run). */
  sd: number;
  /** Smallest detectable change in the figure's unit. */
  smallest: number;
}

/** z(1 - alpha/2) + z(power). */
export function zSum(alpha = DEFAULT_ALPHA, power = DEFAULT_POWER): number {
  return probit(1 - alpha / 2) + probit(power);
}

/** The smallest detectable change from per-unit values; null with fewer than two units. */
export function detectability(values: readonly number[], alpha = DEFAULT_ALPHA, power = DEFAULT_POWER): Detectability | null {
  const finite = values.filter((v) => Number.isFinite(v));
  if (finite.length < 2) return null;
  const sd = sampleStandardDeviation(finite);
  return { n: finite.length, sd, smallest: (zSum(alpha, power) * sd) / Math.sqrt(finite.length) };
}

/** Units needed so that a change of `allowance` is the smallest detectable one; null when it cannot be said. */
export function unitsNeeded(sd: number, allowance: number, alpha = DEFAULT_ALPHA, power = DEFAULT_POWER): number | null {
  if (!(allowance > 0) || !Number.isFinite(sd)) return null;
  if (sd === 0) return 2;
  return Math.max(2, Math.ceil(((zSum(alpha, power) * sd) / allowance) ** 2));
}
