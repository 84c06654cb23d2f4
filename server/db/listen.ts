import pg from 'pg';
import { Model } from 'objection';

export interface Listener {
  /** Resolves once the first LISTEN is in place (true) or failed (false). */
  ready: Promise<boolean>;
  stop(): Promise<void>;
}

/**
 * LISTEN on one channel over a connection of its own (outside the pool), reconnecting after a loss. `onState(false)`
 * says notifications may have been missed from now on; `onState(true)` that they flow again. `unref` keeps the
 * connection from holding a process open by itself (the web server's caches; the worker keeps its own alive).
 */
export function listenTo(
  channel: string,
  onPayload: (payload: string) => void,
  options: { onState?: (up: boolean, error?: Error) => void; retryMs?: number; unref?: boolean } = {},
): Listener {
  const connection = (Model.knex().client as { config: { connection: string | pg.ClientConfig } }).config.connection;
  const retryMs = options.retryMs ?? 5000;
  let client: pg.Client | null = null;
  let stopped = false;
  const lost = (c: pg.Client, error: Error) => {
    if (client !== c) return;
    client = null;
    options.onState?.(false, error);
    c.end().catch(() => undefined);
    if (!stopped) {
      const timer = setTimeout(() => void connect(), retryMs);
      if (options.unref) timer.unref();
    }
  };
  const connect = async (): Promise<boolean> => {
    if (stopped) return false;
    // Named, so an operator (or a test) can tell these connections apart in pg_stat_activity.
    const name = { application_name: `loadline-listen ${channel} ${process.pid}` };
    // Knex keeps the password of a parsed URL as a non-enumerable property: name it, a spread would drop it.
    const c = new pg.Client(typeof connection === 'string' ? { connectionString: connection, ...name } : { ...connection, password: connection.password, ...name });
    c.on('notification', (message) => {
      if (message.channel === channel) onPayload(message.payload ?? '');
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
      const c = client;
      client = null;
      await c?.end().catch(() => undefined);
    },
  };
}
