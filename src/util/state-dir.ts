/**
 * bearline's state folder, where a station keeps what must survive a restart (the MQTT queue).
 * The rule, first match wins:
 *   1. $STATE_DIRECTORY, which systemd sets from the unit's StateDirectory= (the service:
 *      /var/lib/bearline); when it lists several folders, the first;
 *   2. $XDG_STATE_HOME/bearline (an absolute path; the XDG Base Directory convention);
 *   3. ~/.local/state/bearline (that convention's default).
 * Never the working folder.
 */
import { homedir } from 'node:os';
import { join } from 'node:path';

export function stateDir(env: NodeJS.ProcessEnv = process.env): string {
  const service = env.STATE_DIRECTORY?.split(':')[0];
  if (service && service.startsWith('/')) return service;
  const xdg = env.XDG_STATE_HOME;
  if (xdg && xdg.startsWith('/')) return join(xdg, 'bearline');
  return join(homedir(), '.local', 'state', 'bearline');
}

/** Said in --help and messages. */
export const STATE_DIR_RULE = '$STATE_DIRECTORY (set by systemd), else $XDG_STATE_HOME/bearline, else ~/.local/state/bearline';
