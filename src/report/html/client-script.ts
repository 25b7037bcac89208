/** The report's client script, as the page embeds it (its hash goes into the page's Content-Security-Policy). */
import { REPORT_JS } from '../html-client.js';

export function reportScript(): string {
  return REPORT_JS;
}
