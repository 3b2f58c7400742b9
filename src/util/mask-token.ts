/**
 * URLs with an access token are printed with the token masked (stderr ends up in the journal
 * and in bug reports): its first two characters, then stars. The user gave the token and can
 * put it in; the rest of the URL (address, port) is shown as it is.
 */
export function maskToken(url: string): string {
  return url.replace(/([?&]token=)([^&#\s]*)/g, (_m, key: string, value: string) => `${key}${decodeURIComponent(value).slice(0, 2)}******`);
}
