/**
 * Load a module of this package that may not exist yet in a given build (e.g. the
 * HTML report). Resolves relative to this file; returns undefined only when that
 * very module is missing, and rethrows any other error.
 */
export async function optionalModule<T>(relativeSpecifier: string): Promise<T | undefined> {
  const url = new URL(relativeSpecifier, import.meta.url).href;
  try {
    return (await import(url)) as T;
  } catch (e) {
    const err = e as NodeJS.ErrnoException;
    if ((err.code === 'ERR_MODULE_NOT_FOUND' || /Cannot find module|Failed to load url/i.test(err.message)) && err.message.includes(relativeSpecifier.replace(/^(\.\.?\/)+/, ''))) {
      return undefined;
    }
    throw e;
  }
}
