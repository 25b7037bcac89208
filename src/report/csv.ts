/**
 * CSV text with csv-stringify. Text cells that a spreadsheet would read as a formula
 * (starting with = + - @, a tab or a carriage return) get a leading single quote, as
 * the OWASP "CSV Injection" guidance recommends. Numbers are written as numbers, so a
 * negative value such as -0.5 stays a number. null / undefined become an empty cell.
 */
import { stringify } from 'csv-stringify/sync';

export type CsvCell = string | number | null | undefined;

const FORMULA_START = /^[=+\-@\t\r]/;

/** Neutralise one text cell (see module comment). */
export function neutraliseCell(text: string): string {
  return FORMULA_START.test(text) ? `'${text}` : text;
}

function cellText(v: CsvCell): string {
  if (v === null || v === undefined) return '';
  if (typeof v === 'number') return Number.isFinite(v) ? String(v) : '';
  return neutraliseCell(v);
}

/** The whole CSV document: one header line, then one line per row, `\n` line ends. */
export function csvText(header: string[], rows: CsvCell[][]): string {
  const records: string[][] = [header.map(cellText)];
  for (const r of rows) records.push(r.map(cellText));
  // A lone CR in a field is quoted too (csv-stringify quotes only delimiters, quotes and LF).
  return stringify(records, { record_delimiter: 'unix', quoted_match: /\r/ });
}
