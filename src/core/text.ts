/**
 * Text taken from a file into an error message: the message must stay on one line and
 * must not carry terminal control characters, whatever the file holds. Quoting, and the
 * one formatter of schema (zod) issues, whose keys and messages may come from a file.
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

/** The parts of a zod issue that issueText reads (no zod import needed here). */
export interface ZodIssueLike {
  code?: string;
  message: string;
  path: readonly PropertyKey[];
  keys?: readonly string[];
}

/** Format an issue path as `pairs[2].truth`; a key that is not a plain name is quoted, so the text stays on one line. */
export function formatFieldPath(path: readonly PropertyKey[]): string {
  let s = '';
  for (const k of path) {
    if (typeof k === 'number') s += `[${k}]`;
    else {
      const name = /^[A-Za-z_][A-Za-z0-9_]{0,39}$/.test(String(k)) ? String(k) : quote(String(k));
      s += s ? `.${name}` : name;
    }
  }
  return s || '(top level)';
}

/** An issue as a line of text, without the field: unknown keys quoted, control characters folded. */
export function issueMessage(issue: ZodIssueLike): string {
  if (issue.code === 'unrecognized_keys' && Array.isArray(issue.keys)) {
    return `unknown key${issue.keys.length === 1 ? '' : 's'} ${issue.keys.map((k) => quote(String(k))).join(', ')}`;
  }
  // eslint-disable-next-line no-control-regex -- control characters are what this folds
  return issue.message.replace(/[\x00-\x1f\x7f]+/g, ' ');
}

/** One line for an issue: `field pairs[2].truth: <message>`. */
export function issueText(issue: ZodIssueLike): string {
  return `field ${formatFieldPath(issue.path)}: ${issueMessage(issue)}`;
}

/** All issues on one line, `path: message; path: message`, each path under `prefix`. */
export function issuesLine(issues: readonly ZodIssueLike[], prefix = ''): string {
  return issues
    .map((i) => {
      const path = i.path.length ? formatFieldPath(i.path) : '';
      const where = prefix && path ? `${prefix}.${path}`.replace(/\.\[/g, '[') : prefix || path;
      return where ? `${where}: ${issueMessage(i)}` : issueMessage(i);
    })
    .join('; ');
}
