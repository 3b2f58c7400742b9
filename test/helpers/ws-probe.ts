/** A WebSocket client for feed tests: collects every message and waits for conditions. */
import { WebSocket, type ClientOptions } from 'ws';

export type FeedMessage = { type: string } & Record<string, unknown>;

export interface Probe {
  readonly ws: WebSocket;
  readonly messages: FeedMessage[];
  /** Resolves with the close code and reason when the connection ends. */
  readonly closed: Promise<{ code: number; reason: string }>;
  ofType(type: string): FeedMessage[];
  waitFor(pred: (messages: FeedMessage[]) => boolean, what: string, timeoutMs?: number): Promise<void>;
  close(): void;
}

export function probe(url: string, opts: ClientOptions = {}): Probe {
  const ws = new WebSocket(url, opts);
  const messages: FeedMessage[] = [];
  const listeners = new Set<() => void>();
  ws.on('message', (data) => {
    messages.push(JSON.parse(data.toString()) as FeedMessage);
    for (const l of listeners) l();
  });
  ws.on('error', () => undefined);
  const closed = new Promise<{ code: number; reason: string }>((resolve) => {
    ws.on('close', (code, reason) => resolve({ code, reason: reason.toString() }));
  });
  return {
    ws,
    messages,
    closed,
    ofType: (type) => messages.filter((m) => m.type === type),
    waitFor(pred, what, timeoutMs = 5000) {
      return new Promise((resolve, reject) => {
        if (pred(messages)) return resolve();
        const timer = setTimeout(() => {
          listeners.delete(check);
          reject(new Error(`timed out waiting for ${what} (${messages.length} messages so far)`));
        }, timeoutMs);
        const check = (): void => {
          if (!pred(messages)) return;
          clearTimeout(timer);
          listeners.delete(check);
          resolve();
        };
        listeners.add(check);
      });
    },
    close: () => ws.close(),
  };
}

/** Resolves with the HTTP status a refused WebSocket upgrade got. */
export function refusedStatus(url: string): Promise<number> {
  return new Promise((resolve, reject) => {
    const ws = new WebSocket(url);
    ws.on('unexpected-response', (_req, res) => {
      resolve(res.statusCode ?? 0);
      ws.terminate();
    });
    ws.on('open', () => {
      ws.close();
      reject(new Error('the connection was accepted'));
    });
    ws.on('error', () => undefined);
  });
}

/** Wait until a condition holds, polling (for server-side state). */
export async function until(cond: () => boolean, what: string, timeoutMs = 5000): Promise<void> {
  const end = Date.now() + timeoutMs;
  while (!cond()) {
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 10));
  }
}
