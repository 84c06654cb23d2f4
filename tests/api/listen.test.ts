import { afterAll, describe, expect, it } from 'vitest';
import { createServer, connect, type Socket } from 'node:net';
import { Model } from 'objection';
import { createKnex } from '../../server/db/knex';
import { loadConfig } from '../../server/config';
import { listenTo } from '../../server/db/listen';
import { unique } from '../helpers/app';

/**
 * The LISTEN helper against the real database, reached through a loopback TCP relay that this test can freeze: a
 * frozen relay keeps the socket open but forwards nothing, as a dropped NAT entry or a fail-over that never closes
 * the socket would. No error reaches the client then; only the heartbeat can tell.
 */
const config = loadConfig();
const target = new URL(config.databaseUrl);
const pairs: { client: Socket; server: Socket; frozen: boolean }[] = [];
const relay = createServer((client) => {
  const server = connect(Number(target.port || 5432), target.hostname);
  const pair = { client, server, frozen: false };
  pairs.push(pair);
  const forward = (from: Socket, to: Socket) => from.on('data', (chunk) => (pair.frozen ? undefined : to.write(chunk)));
  forward(client, server);
  forward(server, client);
  const close = () => {
    client.destroy();
    server.destroy();
  };
  client.on('error', close);
  server.on('error', close);
  client.on('close', close);
  server.on('close', close);
});
await new Promise<void>((done) => relay.listen(0, '127.0.0.1', done));
const relayPort = (relay.address() as { port: number }).port;
const viaRelay = new URL(config.databaseUrl);
viaRelay.port = String(relayPort);
viaRelay.hostname = '127.0.0.1';
const relayed = createKnex(viaRelay.toString(), { max: 1 });
const direct = createKnex(config.databaseUrl, { max: 1 });
Model.knex(relayed); // listenTo takes its connection settings from the bound knex

afterAll(async () => {
  for (const { client, server } of pairs) {
    client.destroy();
    server.destroy();
  }
  relay.close();
  await relayed.destroy();
  await direct.destroy();
});

async function until(check: () => boolean, what: string, timeoutMs = 10_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!check()) {
    if (Date.now() > deadline) throw new Error(`timed out waiting until ${what}`);
    await new Promise((done) => setTimeout(done, 20));
  }
}

describe('LISTEN with a heartbeat', () => {
  it('notices a connection that stops answering without closing, and comes back on a new one', async () => {
    const channel = unique('loadline_test_listen_').toLowerCase();
    const payloads: string[] = [];
    const states: boolean[] = [];
    const listener = listenTo(channel, (p) => payloads.push(p), { heartbeatMs: 150, heartbeatTimeoutMs: 400, retryMs: 100, onState: (up) => states.push(up) });
    try {
      expect(await listener.ready).toBe(true);
      await direct.raw('SELECT pg_notify(?, ?)', [channel, 'first']);
      await until(() => payloads.includes('first'), 'the first notification arrives');
      await new Promise((done) => setTimeout(done, 500)); // several heartbeats go round
      expect(states).toEqual([true]);
      expect(payloads).toEqual(['first']); // heartbeats are never handed on

      // Freeze the current connection: bytes are swallowed, the socket stays open.
      for (const pair of pairs) pair.frozen = true;
      await until(() => states.length >= 2, 'the silent loss is noticed');
      expect(states[1]).toBe(false);
      // New connections pass again; the listener reconnects through the relay on a fresh socket.
      await until(() => states[states.length - 1] === true, 'the listener is back');
      await direct.raw('SELECT pg_notify(?, ?)', [channel, 'second']);
      await until(() => payloads.includes('second'), 'notifications flow again');
    } finally {
      await listener.stop();
    }
  });
});
