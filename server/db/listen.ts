import pg from 'pg';
import { Model } from 'objection';

export interface Listener {
  /** Resolves once the first LISTEN is in place (true) or failed (false). */
  ready: Promise<boolean>;
  stop(): Promise<void>;
}

const HEARTBEAT_PREFIX = 'heartbeat:';

/**
 * LISTEN on one channel over a connection of its own (outside the pool), reconnecting after a loss. `onState(false)`
 * says notifications may have been missed from now on; `onState(true)` that they flow again. `unref` keeps the
 * connection from holding a process open by itself (the web server's caches; the worker keeps its own alive).
 *
 * A connection that dies silently (a dropped NAT entry, a fail-over that never closes the socket, a pooler that does
 * not forward notifications) raises no error: every `heartbeatMs` the listener sends a NOTIFY to its own channel over
 * its own connection and counts the connection lost unless that NOTIFY comes back within `heartbeatTimeoutMs`.
 * Heartbeat payloads are never passed to `onPayload`.
 */
export function listenTo(
  channel: string,
  onPayload: (payload: string) => void,
  options: { onState?: (up: boolean, error?: Error) => void; retryMs?: number; unref?: boolean; heartbeatMs?: number; heartbeatTimeoutMs?: number } = {},
): Listener {
  const connection = (Model.knex().client as { config: { connection: string | pg.ClientConfig } }).config.connection;
  const retryMs = options.retryMs ?? 5000;
  const heartbeatMs = options.heartbeatMs ?? 5000;
  const heartbeatTimeoutMs = options.heartbeatTimeoutMs ?? 3000;
  const timers = new Set<NodeJS.Timeout>();
  const later = (ms: number, run: () => void) => {
    const timer = setTimeout(() => {
      timers.delete(timer);
      run();
    }, ms);
    if (options.unref) timer.unref();
    timers.add(timer);
    return timer;
  };
  let client: pg.Client | null = null;
  let stopped = false;
  let beats = 0;
  const lost = (c: pg.Client, error: Error) => {
    if (client !== c) return;
    client = null;
    options.onState?.(false, error);
    c.end().catch(() => undefined);
    if (!stopped) later(retryMs, () => void connect());
  };
  const heartbeat = (c: pg.Client) => {
    if (client !== c || stopped) return;
    const payload = `${HEARTBEAT_PREFIX}${process.pid}:${++beats}`;
    let answered = false;
    const back = (message: pg.Notification) => {
      if (message.channel !== channel || message.payload !== payload) return;
      answered = true;
      c.off('notification', back);
      clearTimeout(deadline);
      timers.delete(deadline);
      later(heartbeatMs, () => heartbeat(c));
    };
    const deadline = later(heartbeatTimeoutMs, () => {
      c.off('notification', back);
      if (!answered) lost(c, new Error(`no heartbeat back within ${heartbeatTimeoutMs} ms`));
    });
    c.on('notification', back);
    c.query('SELECT pg_notify($1, $2)', [channel, payload]).catch((error: Error) => lost(c, error));
  };
  const connect = async (): Promise<boolean> => {
    if (stopped) return false;
    // Named, so an operator (or a test) can tell these connections apart in pg_stat_activity.
    const name = { application_name: `loadline-listen ${channel} ${process.pid}`, keepAlive: true, connectionTimeoutMillis: 10_000 };
    // Knex keeps the password of a parsed URL as a non-enumerable property: name it, a spread would drop it.
    const c = new pg.Client(typeof connection === 'string' ? { connectionString: connection, ...name } : { ...connection, password: connection.password, ...name });
    c.on('notification', (message) => {
      if (message.channel === channel && !message.payload?.startsWith(HEARTBEAT_PREFIX)) onPayload(message.payload ?? '');
    });
    c.on('error', (error) => lost(c, error));
    c.on('end', () => lost(c, new Error('connection closed')));
    client = c;
    try {
      await c.connect();
      if (options.unref) (c as unknown as { connection: { stream: { unref(): void } } }).connection.stream.unref();
      await c.query(`LISTEN ${pg.escapeIdentifier(channel)}`);
      if (stopped || client !== c) return false;
      options.onState?.(true);
      later(heartbeatMs, () => heartbeat(c));
      return true;
    } catch (error) {
      lost(c, error as Error);
      return false;
    }
  };
  return {
    ready: connect(),
    stop: async () => {
      stopped = true;
      for (const timer of timers) clearTimeout(timer);
      timers.clear();
      const c = client;
      client = null;
      await c?.end().catch(() => undefined);
    },
  };
}
