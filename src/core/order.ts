/**
 * The one string order of the project: plain UTF-16 code-unit comparison, independent
 * of locale, so every sort, sum and table comes out the same on every machine.
 */
export function byCodeUnits(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}
