/**
 * Markup that escapes by default: html`<td>${value}</td>` escapes every value, unless
 * it is Markup already (another html`` result, or text marked with trustedHtml()).
 * Arrays are joined, null, undefined and false are left out. Text from a run (labels,
 * parameters, pair ids, error text) can only reach the page unescaped through an
 * explicit trustedHtml() call.
 */

/** Text that is markup already: inserted as it is. */
export class Markup {
  constructor(readonly text: string) {}
  toString(): string {
    return this.text;
  }
}

/** Escape text for HTML element content and quoted attribute values. */
export function escapeHtml(s: unknown): string {
  return String(s).replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&#39;');
}

/** Mark text as markup (the explicit way to insert unescaped text). */
export function trustedHtml(text: string): Markup {
  return new Markup(text);
}

function piece(v: unknown): string {
  if (v instanceof Markup) return v.text;
  if (Array.isArray(v)) return v.map(piece).join('');
  if (v === null || v === undefined || v === false) return '';
  return escapeHtml(v);
}

export function html(strings: TemplateStringsArray, ...values: unknown[]): Markup {
  let out = strings[0];
  for (let i = 0; i < values.length; i++) out += piece(values[i]) + strings[i + 1];
  return new Markup(out);
}

/** JSON that is safe inside a <script> element: < > & and the JS line separators escaped. */
export function scriptSafeJson(value: unknown): string {
  return JSON.stringify(value)
    .replace(/</g, '\\u003c')
    .replace(/>/g, '\\u003e')
    .replace(/&/g, '\\u0026')
    .replace(/\u2028/g, '\\u2028')
    .replace(/\u2029/g, '\\u2029');
}

/** Markup pieces joined with a separator (text, escaped). */
export function joinMarkup(parts: readonly Markup[], separator: string): Markup {
  return new Markup(parts.map((p) => p.text).join(escapeHtml(separator)));
}
