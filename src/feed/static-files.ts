/**
 * Static files of the browser viewer (web-viewer/). Only files found under the web root when
 * the server starts can ever be served: a request path is decoded, normalised and looked up
 * in that list, so '..', encoded slashes, NUL bytes or symlinks out of the root reach nothing.
 */
import { readdir, readFile, realpath } from 'node:fs/promises';
import { extname, join, posix, relative, sep } from 'node:path';
import { fileURLToPath } from 'node:url';

/** web-viewer/ of the checkout or package: two levels up from src/feed/ and from dist/feed/. */
export const DEFAULT_WEB_ROOT = fileURLToPath(new URL('../../web-viewer/', import.meta.url));

const CONTENT_TYPES: Readonly<Record<string, string>> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.json': 'application/json; charset=utf-8',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
  '.ico': 'image/x-icon',
  '.txt': 'text/plain; charset=utf-8',
};

export function contentTypeOf(fileName: string): string {
  return CONTENT_TYPES[extname(fileName).toLowerCase()] ?? 'application/octet-stream';
}

/**
 * The file (relative to the web root, '/' separated) a request path names, or null when it
 * names none of `files`. '/' means index.html. Pure.
 */
export function lookUpStaticPath(urlPath: string, files: ReadonlySet<string>): string | null {
  // An encoded slash or backslash never names a file here.
  if (/%2f|%5c/i.test(urlPath)) return null;
  let decoded: string;
  try {
    decoded = decodeURIComponent(urlPath);
  } catch {
    return null;
  }
  if (decoded.includes('\0') || decoded.includes('\\') || !decoded.startsWith('/')) return null;
  const normal = posix.normalize(decoded);
  if (normal !== decoded || normal.split('/').some((part) => part === '..' || part.startsWith('.'))) return null;
  const name = normal === '/' ? 'index.html' : normal.slice(1);
  return files.has(name) ? name : null;
}

/** Every regular file under the root (symlinks that lead out of it are left out). */
export async function listStaticFiles(root: string): Promise<Set<string>> {
  const realRoot = await realpath(root);
  const found = new Set<string>();
  const walk = async (dir: string): Promise<void> => {
    for (const entry of await readdir(dir, { withFileTypes: true })) {
      if (entry.name.startsWith('.')) continue;
      const full = join(dir, entry.name);
      const real = await realpath(full).catch(() => null);
      if (real === null || !(real === realRoot || real.startsWith(realRoot + sep))) continue;
      if (entry.isDirectory()) await walk(full);
      else if (entry.isFile() || entry.isSymbolicLink()) found.add(relative(realRoot, full).split(sep).join('/'));
    }
  };
  await walk(realRoot);
  return found;
}

export function readStaticFile(root: string, name: string): Promise<Buffer> {
  return readFile(join(root, ...name.split('/')));
}
