/**
 * `bearline locate --mqtt`: the I/O around the live locator (src/locate/live-locator.ts).
 * Subscribes to every station's events and retained status on the broker, feeds them to the
 * locator with the wall clock, and publishes each fix as a GeoJSON Feature on ROOT/fixes
 * (QoS 1), as one JSON line on stdout and, with --serve, on the fix view. A status line goes
 * to stderr every --status-interval seconds and into the retained ROOT/locate status (the
 * broker replaces it with "offline" as the last will if this process vanishes).
 *
 * Exit: a broker that cannot be reached at the start is bad input (exit 2); one that is lost
 * for longer than --broker-give-up is a runtime failure (exit 1); SIGINT/SIGTERM decide the
 * waiting calls with what they have, publish them and exit 0.
 */
import { randomBytes } from 'node:crypto';
import mqtt, { type MqttClient } from 'mqtt';
import type { FeedOptions } from '../feed/feed-options.js';
import { type LiveFix, LiveLocator } from '../locate/live-locator.js';
import type { LiveLocateOptions } from '../locate/live-options.js';
import type { LocateOptions } from '../locate/options.js';
import { type GeoJsonFeature, featureOf } from '../locate/output.js';
import type { PlacedStations } from '../locate/stations.js';
import { locateTopicNames, stationTopicNames, topicStationProblem } from '../station/station-topics.js';
import { UsageError } from '../util/errors.js';
import type { FleetOptions } from './fleet-options.js';
import { readStationMessage, readStationState } from './fleet-messages.js';
import { type FixViewCall, type FixViewFix, fixViewOf, helloOf, snapshotMessage, stationMessage, statusMessage } from './fix-view-messages.js';
import { type FixViewServer, startFixViewServer } from './fix-view-server.js';

/** How often waiting calls are looked at (ms). Not a setting: it only bounds the extra wait. */
const TICK_MS = 100;
/** Fixes and calls a page that joins late is sent. */
const VIEW_KEEP_FIXES = 200;
const VIEW_KEEP_CALLS = 100;

/** A fix as published: the file mode's Feature, with its id, revision and backfill mark. */
export interface LiveFeature extends GeoJsonFeature {
  id: string;
  properties: GeoJsonFeature['properties'] & { revision: number; backfill: boolean };
}

export function liveFeatureOf(f: LiveFix): LiveFeature {
  const feature = featureOf(f.call);
  return { type: 'Feature', id: f.id, geometry: feature.geometry, properties: { ...feature.properties, revision: f.revision, backfill: f.backfill } };
}

export interface FleetLocateSetup {
  placed: PlacedStations;
  options: LocateOptions;
  live: LiveLocateOptions;
  fleet: FleetOptions & { mqtt: string };
  /** The fix view's options with --serve, else null. */
  feed: FeedOptions | null;
  /** One JSON line per fix (stdout). */
  out: (line: string) => void;
  /** One line for the user (stderr). */
  say: (line: string) => void;
  /** Told the view's URL when it listens. */
  onServing?: (url: string) => void;
}

export interface FleetLocateRun {
  /** Resolves with the exit code once the run has stopped. */
  readonly done: Promise<number>;
  /** Decide what waits, publish it, say goodbye to the broker; resolves with the exit code. */
  stop(code?: number): Promise<number>;
}

/** Check what the live mode needs of the stations before connecting (exit 2 otherwise). */
export function checkLiveStations(placed: PlacedStations, source: string): void {
  if (placed.frame === null) {
    throw new UsageError(`${source}: the stations are in local metres without an "origin": add "origin" (lat_deg, lon_deg) so the fixes can be published as GeoJSON`);
  }
  for (const st of placed.stations) {
    const problem = topicStationProblem(st.id);
    if (problem !== null) throw new UsageError(`${source}: station id '${st.id}' cannot name MQTT topics: it ${problem}`);
  }
}

function connectFirst(url: string, clientId: string, will: { topic: string; payload: string }): Promise<MqttClient> {
  return new Promise((resolve, reject) => {
    const client = mqtt.connect(url, {
      clientId,
      protocolVersion: 5,
      clean: false,
      // The broker keeps our subscriptions and queues events for 10 minutes if we drop off.
      properties: { sessionExpiryInterval: 600 },
      reconnectPeriod: 1000,
      connectTimeout: 10_000,
      will: { topic: will.topic, payload: Buffer.from(will.payload), qos: 1, retain: true },
    });
    const fail = (why: string): void => {
      client.removeAllListeners('connect');
      client.end(true);
      reject(new UsageError(`cannot reach the MQTT broker ${url} (${why}): check the address and port, and that the broker runs`));
    };
    const onError = (err: Error): void => fail((err as NodeJS.ErrnoException).code ?? err.message);
    const onClose = (): void => fail('connection closed');
    client.once('error', onError);
    client.once('close', onClose);
    client.once('connect', () => {
      client.off('error', onError);
      client.off('close', onClose);
      resolve(client);
    });
  });
}

export async function startFleetLocate(setup: FleetLocateSetup): Promise<FleetLocateRun> {
  const { placed, fleet, say } = setup;
  const url = fleet.mqtt;
  const topics = locateTopicNames(fleet.topicRoot);
  const startS = Date.now() / 1000;
  const locator = new LiveLocator(placed, setup.options, setup.live, Math.floor(startS));
  const byTopic = new Map<string, { id: string; kind: 'events' | 'status' }>();
  for (const st of placed.stations) {
    const t = stationTopicNames(fleet.topicRoot, st.id);
    byTopic.set(t.events, { id: st.id, kind: 'events' });
    byTopic.set(t.status, { id: st.id, kind: 'status' });
  }
  const stationState: Record<string, boolean | null> = Object.fromEntries(placed.stations.map((s) => [s.id, null]));
  const statusText = (state: 'online' | 'offline', extra: Record<string, unknown> = {}): string =>
    JSON.stringify({ state, utc: new Date().toISOString(), ...extra });

  const client = await connectFirst(url, `bearline-locate-${randomBytes(4).toString('hex')}`, { topic: topics.status, payload: statusText('offline', { reason: 'lost' }) });
  const granted = await client.subscribeAsync([...byTopic.keys()], { qos: 1 }).catch((err: Error) => {
    client.end(true);
    throw new UsageError(`the MQTT broker ${url} refused the subscriptions (${err.message}): check its access rules for ${fleet.topicRoot}/#`);
  });
  const refused = granted.filter((g) => g.qos === 128);
  if (refused.length > 0) {
    client.end(true);
    throw new UsageError(`the MQTT broker ${url} refused the subscription to ${refused[0]!.topic}: check its access rules for ${fleet.topicRoot}/#`);
  }

  let view: FixViewServer | null = null;
  const recentFixes = new Map<string, FixViewFix>();
  const recentCalls: FixViewCall[] = [];
  if (setup.feed !== null) {
    view = await startFixViewServer(setup.feed, JSON.stringify(helloOf(placed)), () => undefined, (m) => say(`warning: ${m}`)).catch(async (err: unknown) => {
      await client.endAsync(true);
      throw err;
    });
    const v = view;
    v.onViewer(() => v.broadcast(snapshotMessage(stationState, [...recentFixes.values()], recentCalls, locator.counts())));
    setup.onServing?.(v.url);
  }

  const emit = (fixes: readonly LiveFix[]): void => {
    for (const f of fixes) {
      const line = JSON.stringify(liveFeatureOf(f));
      setup.out(line);
      client.publish(topics.fixes, line, { qos: 1 });
      if (view !== null) {
        const v = fixViewOf(f, placed);
        recentFixes.delete(f.id);
        if (v !== null) {
          recentFixes.set(f.id, v);
          if (recentFixes.size > VIEW_KEEP_FIXES) recentFixes.delete(recentFixes.keys().next().value!);
          view.broadcast(JSON.stringify(v));
        }
      }
    }
  };
  const badSaid = new Set<string>();
  const headings = new Map(placed.stations.map((st) => [st.id, st.headingDeg]));
  client.on('message', (topic, payload) => {
    const where = byTopic.get(topic);
    if (where === undefined) return;
    const nowS = Date.now() / 1000;
    const text = payload.toString('utf8');
    if (where.kind === 'status') {
      if (text === '') return;
      const online = readStationState(text);
      if (online === null) return;
      stationState[where.id] = online;
      const note = locator.stationState(where.id, online, nowS);
      if (note !== null) say(note);
      view?.broadcast(stationMessage(where.id, online));
      return;
    }
    const msg = readStationMessage(text, where.id);
    if (msg.kind === 'bad') {
      if (!badSaid.has(where.id)) {
        badSaid.add(where.id);
        say(`warning: a message on ${topic} is not an event (${msg.problem}); such messages are left out (said once per station)`);
      }
      return;
    }
    if (msg.seq !== null && !locator.acceptSeq(where.id, msg.seq)) return;
    if (msg.kind === 'gap') return;
    const outcome = locator.event(where.id, msg.record, `${where.id}#${msg.seq ?? '?'}`, nowS);
    if (outcome.note !== null) say(`warning: ${outcome.note}`);
    emit(outcome.fixes);
    if (view !== null) {
      const heading = headings.get(where.id) ?? null;
      const bearing = msg.record.bearing_deg ?? (heading === null ? null : msg.record.azimuth_deg + heading);
      if (bearing !== null) {
        const call: FixViewCall = { type: 'call', station: where.id, bearing_deg: ((bearing % 360) + 360) % 360, utc: msg.record.utc ?? null };
        recentCalls.push(call);
        if (recentCalls.length > VIEW_KEEP_CALLS) recentCalls.shift();
        view.broadcast(JSON.stringify(call));
      }
    }
  });

  let lostAtS: number | null = null;
  let stopping: Promise<number> | null = null;
  let resolveDone: (code: number) => void = () => undefined;
  const done = new Promise<number>((r) => (resolveDone = r));
  client.on('close', () => {
    if (stopping !== null || lostAtS !== null) return;
    lostAtS = Date.now() / 1000;
    say(`lost the MQTT broker ${url}; retrying for up to ${fleet.brokerGiveUpS} s (--broker-give-up)`);
  });
  client.on('error', () => undefined);
  client.on('connect', () => {
    if (lostAtS === null) return;
    lostAtS = null;
    say(`the MQTT broker ${url} is back`);
    client.publish(topics.status, statusText('online', { ...locator.counts() }), { qos: 1, retain: true });
  });

  const statusLine = (): string => {
    const c = locator.counts();
    const states = placed.stations.map((s) => `${s.id} ${stationState[s.id] === null ? 'unknown' : stationState[s.id] ? 'online' : 'offline'}`).join(', ');
    return (
      `status: ${c.fixes} fixes, ${c.revised} revised, ${c.backfilled} backfill events, ${c.late} late, ${c.unmatched} unmatched, ${c.unfixed} unfixed, ` +
      `${c.stale} stale, ${c.forced} forced, ${c.repeats} repeats, ${c.lost} lost; ${c.pending} waiting; stations: ${states}`
    );
  };
  const publishStatus = (state: 'online' | 'offline', extra: Record<string, unknown> = {}): Promise<void> =>
    new Promise((resolve) => {
      if (!client.connected) return resolve();
      const t = setTimeout(resolve, 1000);
      const stations = Object.fromEntries(placed.stations.map((s) => [s.id, stationState[s.id] === null ? 'unknown' : stationState[s.id] ? 'online' : 'offline']));
      client.publish(topics.status, statusText(state, { ...locator.counts(), stations, ...extra }), { qos: 1, retain: true }, () => {
        clearTimeout(t);
        resolve();
      });
    });
  void publishStatus('online');

  const stop = (code = 0): Promise<number> => {
    if (stopping !== null) return stopping;
    stopping = (async () => {
      clearInterval(ticker);
      clearInterval(reporter);
      emit(locator.flush());
      say(statusLine());
      await publishStatus('offline', { reason: code === 0 ? 'stopped' : 'failed' });
      // Wait (at most 2 s) for the broker to take the fixes still in flight.
      const until = Date.now() + 2000;
      while (client.connected && Object.keys(client.outgoing).length > 0 && Date.now() < until) await new Promise((r) => setTimeout(r, 20));
      await Promise.race([client.endAsync(false), new Promise((r) => setTimeout(r, 1000))]);
      if (!client.disconnected) await client.endAsync(true);
      await view?.close();
      resolveDone(code);
      return code;
    })();
    return stopping;
  };

  const ticker = setInterval(() => {
    const nowS = Date.now() / 1000;
    emit(locator.tick(nowS));
    if (lostAtS !== null && nowS - lostAtS > fleet.brokerGiveUpS) {
      say(`the MQTT broker ${url} has been unreachable for ${fleet.brokerGiveUpS} s (--broker-give-up): stopping; the fixes so far are on stdout`);
      void stop(1);
    }
  }, TICK_MS);
  const reporter = setInterval(() => {
    say(statusLine());
    view?.broadcast(statusMessage(locator.counts()));
    void publishStatus('online');
  }, fleet.statusIntervalS * 1000);

  return { done, stop };
}
