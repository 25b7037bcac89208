/**
 * Quoting text taken from a file into an error message: the message must stay on
 * one line and must not carry terminal control characters, whatever the file holds.
 */

/** `"text"` with every byte outside printable ASCII written as \xNN, cut to `max` characters. */
export function quote(text: string, max = 40): string {
  const cut = text.length > max ? text.slice(0, max) : text;
  let out = '';
  for (let i = 0; i < cut.length; i++) {
    const c = cut.charCodeAt(i);
    if (c >= 0x20 && c < 0x7f && c !== 0x22 && c !== 0x5c) out += cut[i];
    else if (c <= 0xff) out += `\\x${c.toString(16).padStart(2, '0')}`;
    else out += `\\u${c.toString(16).padStart(4, '0')}`;
  }
  return `"${out}${text.length > max ? '...' : ''}"`;
}
