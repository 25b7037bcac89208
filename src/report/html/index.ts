/** The HTML report (see render.ts for what the page holds and how it is built). */
export { buildHtmlReport, renderHtmlReport, type HtmlReportOptions, type HtmlSink } from './render.js';
export { writeHtmlReport, REPORT_FILE } from './write.js';
export { escapeHtml, scriptSafeJson, html, trustedHtml } from './markup.js';
export { SAFETY_CAUTION } from './page.js';
