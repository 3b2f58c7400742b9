import { fileURLToPath } from 'node:url';

/** The folder of configs shipped with bearline (arrays/, profiles/, scenes/, systemd/), ending in '/'. */
export function configsDir(): string {
  return fileURLToPath(new URL('../../configs/', import.meta.url));
}
