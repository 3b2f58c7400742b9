/**
 * Which names a local HTTP server (the live feed, the health endpoint) answers to, so that a web
 * page elsewhere cannot read it through the user's browser: the Host header must name this
 * machine (a DNS-rebinding page reaches us under the attacker's own name), and a browser's
 * Origin header, when sent, must be the server's own page (a page of another site or port is
 * refused). Programs that send no Origin (curl, scripts) pass the Origin check.
 *
 * Names accepted: loopback (localhost, 127.0.0.0/8, ::1); the address the server is bound to;
 * for a wildcard bind (0.0.0.0, ::) every address of this machine and its host name; and the
 * names of the server's allow-list option (e.g. a DNS name or a reverse proxy in front of it).
 */
import { isIP } from 'node:net';
import { hostname, networkInterfaces } from 'node:os';

export interface HostRule {
  /** Names (lower case, IPv6 without brackets) this server answers to on its own port. */
  readonly names: ReadonlySet<string>;
  /** Names from the allow-list: any port and scheme (a proxy in front may use another). */
  readonly listed: ReadonlySet<string>;
  /** The server's port (the page's own origin has it). */
  port: number;
}

const strip = (h: string): string => h.toLowerCase().replace(/^\[(.*)\]$/, '$1').replace(/\.$/, '');

/** True for a name or address only this machine reaches (localhost, 127.0.0.0/8, ::1). */
export function isLoopbackName(name: string): boolean {
  return isLoopbackNameRaw(strip(name));
}

function isLoopbackNameRaw(name: string): boolean {
  return name === 'localhost' || name.endsWith('.localhost') || name === '::1' || (isIP(name) === 4 && name.startsWith('127.'));
}

/** Split an allow-list option's text ('pond.example,192.0.2.7') into names; null for none. */
export function parseHostList(text: string | null): string[] {
  if (text === null) return [];
  return text
    .split(',')
    .map((s) => s.trim())
    .filter((s) => s !== '')
    .map(strip);
}

/** The problem with an allow-list option's text, or null (for the option spec's check). */
export function hostListProblem(text: string): string | null {
  const names = parseHostList(text);
  if (names.length === 0) return 'names no host: give host names or addresses separated by commas';
  const bad = names.find((n) => isIP(n) === 0 && !/^[a-z0-9]([a-z0-9-]*[a-z0-9])?(\.[a-z0-9]([a-z0-9-]*[a-z0-9])?)*$/.test(n));
  return bad === undefined ? null : `holds '${bad}', which is not a host name or an IP address (give names separated by commas, without ports)`;
}

export function hostRule(bindHost: string, port: number, allowList: string | null): HostRule {
  const names = new Set<string>(['localhost', '127.0.0.1', '::1']);
  const bind = strip(bindHost);
  if (bind === '0.0.0.0' || bind === '::') {
    for (const list of Object.values(networkInterfaces())) for (const a of list ?? []) names.add(strip(a.address.split('%')[0]!));
    names.add(strip(hostname()));
  } else {
    names.add(bind);
  }
  const listed = new Set(parseHostList(allowList));
  for (const n of listed) names.add(n);
  return { names, listed, port };
}

/** The name and port of a Host header ('[::1]:8417' -> ['::1', 8417]); null when it cannot be read. */
function splitHost(header: string): { name: string; port: number | null } | null {
  const m = /^(\[[0-9a-fA-F:.]+\]|[^:[\]]+)(?::(\d{1,5}))?$/.exec(header.trim());
  if (!m) return null;
  return { name: strip(m[1]!), port: m[2] === undefined ? null : Number(m[2]) };
}

/** Why a request's Host or Origin is refused, or null when both are fine. */
export function refusedBecause(rule: HostRule, host: string | undefined, origin: string | undefined): string | null {
  const h = host === undefined ? null : splitHost(host);
  if (h === null) return `no readable Host header`;
  if (!rule.names.has(h.name) && !isLoopbackName(h.name)) return `Host '${host}' is not a name of this machine`;
  if (origin === undefined) return null;
  let o: URL;
  try {
    o = new URL(origin);
  } catch {
    return `Origin '${origin}' is not this server's page`;
  }
  if (o.protocol !== 'http:' && o.protocol !== 'https:') return `Origin '${origin}' is not this server's page`;
  const name = strip(o.hostname);
  if (rule.listed.has(name)) return null;
  const port = o.port === '' ? (o.protocol === 'https:' ? 443 : 80) : Number(o.port);
  const ownName = rule.names.has(name) || isLoopbackName(name);
  if (!ownName || port !== rule.port || o.protocol !== 'http:') return `Origin '${origin}' is not this server's page`;
  return null;
}
