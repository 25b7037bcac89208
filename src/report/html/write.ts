/**
 * Writing index.html: the page is streamed into a temporary file in the run folder as
 * it is rendered, synced, then renamed into place, so readers see the old page or the
 * whole new one, never a part.
 */
import { randomBytes } from 'node:crypto';
import { open, rename, unlink, type FileHandle } from 'node:fs/promises';
import { join } from 'node:path';
import { fsError } from '../../io/files.js';
import { renderHtmlReport, type HtmlReportOptions } from './render.js';

export const REPORT_FILE = 'index.html';

/** Pieces of the page are gathered up to this many UTF-16 units before one write. */
const WRITE_CHUNK = 1 << 16;

/**
 * Write `<runDir>/index.html` and return its path. The page is streamed into a temporary
 * file in the run folder as it is rendered (see renderHtmlReport), synced, then renamed
 * into place: readers see the old page or the whole new one, never a part.
 */
export async function writeHtmlReport(runDir: string, opts: HtmlReportOptions = {}): Promise<string> {
  const path = join(runDir, REPORT_FILE);
  const tmp = join(runDir, `.${REPORT_FILE}.${process.pid}.${randomBytes(6).toString('hex')}.tmp`);
  let fh: FileHandle;
  try {
    fh = await open(tmp, 'wx');
  } catch (e) {
    throw fsError(path, e, 'write');
  }
  let pending: string[] = [];
  let pendingLength = 0;
  let failedWrite: unknown = null;
  const flush = async (): Promise<void> => {
    if (!pendingLength) return;
    const text = pending.join('');
    pending = [];
    pendingLength = 0;
    try {
      await fh.write(text, null, 'utf8');
    } catch (e) {
      failedWrite = e;
      throw e;
    }
  };
  try {
    await renderHtmlReport(
      runDir,
      async (chunk) => {
        pending.push(chunk);
        pendingLength += chunk.length;
        if (pendingLength >= WRITE_CHUNK) await flush();
      },
      { storePairThumbs: true, ...opts },
    );
    await flush();
    try {
      await fh.sync();
      await fh.close();
    } catch (e) {
      failedWrite = e;
      throw e;
    }
  } catch (e) {
    await fh.close().catch(() => undefined);
    await unlink(tmp).catch(() => undefined);
    // A failed write names index.html; errors of the run folder's own files pass as they are.
    throw failedWrite === e ? fsError(path, e, 'write') : e;
  }
  try {
    await rename(tmp, path);
  } catch (e) {
    await unlink(tmp).catch(() => undefined);
    throw fsError(path, e, 'write');
  }
  return path;
}
