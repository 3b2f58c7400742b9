/** Starts a real Mosquitto broker on 127.0.0.1 for tests, with a generated config. */
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync, writeFileSync } from 'node:fs';
import { createServer, connect } from 'node:net';
import { join } from 'node:path';

export const MOSQUITTO = '/usr/sbin/mosquitto';

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = createServer();
    srv.once('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const addr = srv.address();
      const port = typeof addr === 'object' && addr ? addr.port : 0;
      srv.close(() => resolve(port));
    });
  });
}

function portOpen(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const s = connect({ host: '127.0.0.1', port });
    s.once('connect', () => {
      s.destroy();
      resolve(true);
    });
    s.once('error', () => resolve(false));
  });
}

export class Broker {
  private child: ChildProcess | null = null;
  private log = '';
  readonly url: string;
  private readonly conf: string;

  constructor(
    readonly dir: string,
    readonly port: number,
  ) {
    if (!existsSync(MOSQUITTO)) {
      throw new Error(`the MQTT tests need a Mosquitto broker at ${MOSQUITTO}: install the Debian package (apt-get install -y mosquitto)`);
    }
    mkdirSync(join(dir, 'db'), { recursive: true });
    this.url = `mqtt://127.0.0.1:${port}`;
    this.conf = join(dir, 'mosquitto.conf');
    // Persistence keeps the test subscriber's session (and retained messages) across a broker
    // restart, as a real fleet broker would.
    const lines = [
      `listener ${port} 127.0.0.1`,
      'allow_anonymous true',
      'persistence true',
      `persistence_location ${join(dir, 'db')}/`,
      'log_dest stderr',
      'log_type error',
      'log_type warning',
    ];
    if (process.getuid?.() === 0) lines.push('user root');
    writeFileSync(this.conf, lines.join('\n') + '\n');
  }

  async start(): Promise<void> {
    const child = spawn(MOSQUITTO, ['-c', this.conf], { stdio: ['ignore', 'ignore', 'pipe'] });
    this.child = child;
    child.stderr!.setEncoding('utf8').on('data', (d: string) => (this.log += d));
    const until = Date.now() + 10_000;
    while (Date.now() < until) {
      if (child.exitCode !== null) throw new Error(`mosquitto exited with ${child.exitCode}: ${this.log}`);
      if (await portOpen(this.port)) return;
      await new Promise((r) => setTimeout(r, 50));
    }
    throw new Error(`mosquitto did not listen on 127.0.0.1:${this.port} within 10 s: ${this.log}`);
  }

  async stop(): Promise<void> {
    const child = this.child;
    if (!child || child.exitCode !== null) return;
    const gone = new Promise((r) => child.once('exit', r));
    child.kill('SIGTERM');
    await gone;
    this.child = null;
  }
}
