/**
 * Signed-in users kept in memory per process, so an authenticated request does not wait on a query to re-read its
 * user (measured on the portfolio-risk benchmark: server CPU per cached GET 1.6 ms → 1.0 ms).
 *
 * Deactivation, role and password changes must still bite at once, in every process:
 * - a trigger announces every change to a user row on `loadline_user_changed` at commit (migration
 *   20261202040100); each process LISTENs and drops that entry;
 * - a change made through the User model in this process drops every entry at once and again right after its commit
 *   (User's static update/delete hooks call usersChanged), so the next request here never sees the old row, however
 *   late the announcement arrives;
 * - a row read while a change of that user was announced is not kept (it may predate the change); entries are trusted
 *   only while the LISTEN connection is up (everything is dropped when it is lost; a heartbeat through it finds a
 *   connection that died silently within about 8 s, see listen.ts), and for at most USER_TTL_MS in any case.
 */
import { Model } from 'objection';
import type { Knex } from 'knex';
import type { User } from '../models/User';
import { listenTo, type Listener } from '../db/listen';

/** The channel the users trigger announces on (migration 20261202040100 names it too). */
const USER_CHANGED_CHANNEL = 'loadline_user_changed';
const USER_TTL_MS = 30_000;
const MAX_USERS = 5000;

export type CachedUser = Pick<User, 'id' | 'email' | 'name' | 'role' | 'active' | 'sessions_valid_after'>;

const entries = new Map<number, { user: CachedUser; at: number }>();
let listener: Listener | null = null;
let live = false;
/** When the announcements were lost (performance.now()), 0 while they flow or before the first connection. */
let lostSince = 0;
/**
 * A read of a user is kept only if nothing about that user was announced while it ran: `clock` moves on every
 * announcement, `changedAt` remembers when each user was last announced and `allChangedAt` when everything was dropped.
 */
let clock = 0;
let allChangedAt = 0;
const changedAt = new Map<number, number>();

function forgetAll(): void {
  entries.clear();
  changedAt.clear();
  allChangedAt = ++clock;
}

function forgetOne(id: number): void {
  entries.delete(id);
  changedAt.set(id, ++clock);
  if (changedAt.size > MAX_USERS) forgetAll();
}

function ensureListening(): void {
  if (listener) return;
  listener = listenTo(
    USER_CHANGED_CHANNEL,
    (payload) => forgetOne(Number(payload)),
    {
      unref: true,
      onState: (up, error) => {
        forgetAll();
        // Said when announcements are lost and when they come back after a loss (not at the first start).
        if (!up && !lostSince) console.warn(`[api] user changes are not being announced (${error?.message}): every request reads its user from the database`);
        if (up && lostSince) console.warn(`[api] user changes are announced again after ${((performance.now() - lostSince) / 1000).toFixed(1)} s: signed-in users are kept in memory`);
        lostSince = up ? 0 : lostSince || performance.now();
        live = up;
      },
    },
  );
}

/** The user row of a session, from memory when it is known to be current, else from the database. */
export async function sessionUser(id: number): Promise<CachedUser | undefined> {
  ensureListening();
  const now = performance.now();
  const kept = live ? entries.get(id) : undefined;
  if (kept && now - kept.at < USER_TTL_MS) return kept.user;
  const before = clock;
  // A plain query, not the User model: the model's hooks call into this module.
  const user = (await (Model.knex() as Knex)('users').where({ id }).first('id', 'email', 'name', 'role', 'active', 'sessions_valid_after')) as CachedUser | undefined;
  if (!user) return undefined;
  if (live && allChangedAt <= before && (changedAt.get(id) ?? 0) <= before) {
    entries.set(id, { user, at: now });
    if (entries.size > MAX_USERS) entries.delete(entries.keys().next().value!);
  }
  return user;
}

/**
 * Users were changed through the model: forget every entry now, and again once the transaction (if any) has
 * committed, since a request in between may have read and kept the row as it was before the commit.
 */
export function usersChanged(transaction?: Knex | Knex.Transaction): void {
  forgetAll();
  // The outermost transaction: a nested one (a savepoint) settles before anything is committed.
  let outer = transaction as (Partial<Knex.Transaction> & { parentTransaction?: Knex.Transaction }) | undefined;
  while (outer?.parentTransaction) outer = outer.parentTransaction;
  const pending = outer?.executionPromise;
  if (pending) pending.then(forgetAll, forgetAll);
}

/** Whether entries are being kept (the LISTEN connection is up) and whether this user is kept now (tests). */
export function userCacheState(id?: number): { live: boolean; kept: boolean } {
  return { live, kept: id !== undefined && entries.has(id) };
}
