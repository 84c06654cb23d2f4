import { createHash, randomBytes } from 'node:crypto';
import type { Knex } from 'knex';
import type { Config } from '../config';
import { User } from '../models/User';
import { PasswordLink } from '../models/PasswordLink';
import { HttpError, badRequest, conflict, notFound, unprocessable } from '../http/errors';
import { recordAudit } from './auditService';
import { findUserByEmail, hashPassword, passwordMatches } from './authService';
import { passwordLinkMail, sendMail } from './mailService';
import type { AuthenticatedUser } from '../auth/access';
import type { InviteUserBody, PasswordLinkInfo, PasswordLinkPurpose, UpdateUserBody, UserSummary } from '../../shared/schemas/users';

type Actor = { id: number; email: string };

export function userSummary(user: User): UserSummary {
  return {
    id: user.id,
    email: user.email,
    name: user.name,
    role: user.role,
    active: user.active,
    status: !user.active ? 'deactivated' : user.password_hash ? 'active' : 'invited',
    lastSignInAt: user.last_sign_in_at ? new Date(user.last_sign_in_at).toISOString() : null,
    createdAt: new Date(user.created_at).toISOString(),
    updatedAt: new Date(user.updated_at).toISOString(),
  };
}

export async function listUsers(): Promise<UserSummary[]> {
  const users = await User.query().orderBy('email');
  return users.map(userSummary);
}

// --- one-time password links ----------------------------------------------------------------

function hashLinkSecret(secret: string): string {
  return createHash('sha256').update(secret).digest('hex');
}

function linkLifetimeMs(config: Config, purpose: PasswordLinkPurpose): number {
  return purpose === 'invitation' ? config.invitationTtlHours * 3_600_000 : config.passwordResetTtlMinutes * 60_000;
}

/**
 * Issues a fresh link (older unused links of the user stop working) and mails it, all inside `trx`:
 * when the mail cannot be sent the transaction rolls back and nothing is stored.
 */
async function issueAndMailLink(config: Config, user: User, purpose: PasswordLinkPurpose, trx: Knex.Transaction): Promise<void> {
  const now = new Date();
  await PasswordLink.query(trx).patch({ used_at: now }).where({ user_id: user.id }).whereNull('used_at');
  const secret = randomBytes(32).toString('base64url');
  const expiresAt = new Date(now.getTime() + linkLifetimeMs(config, purpose));
  await PasswordLink.query(trx).insert({ user_id: user.id, purpose, token_hash: hashLinkSecret(secret), expires_at: expiresAt });
  try {
    await sendMail(config, passwordLinkMail(config, { purpose, to: user.email, name: user.name, role: user.role, secret, expiresAt }));
  } catch (error) {
    throw new HttpError(502, `The e-mail could not be sent (${(error as Error).message}); nothing was saved. Check SMTP_URL and try again.`);
  }
}

const INVALID_LINK = 'This link is not valid any more: it was used, replaced by a newer one, or it expired. Ask for a new one.';

async function liveLink(secret: string, trx?: Knex.Transaction): Promise<{ link: PasswordLink; user: User }> {
  const query = PasswordLink.query(trx).where({ token_hash: hashLinkSecret(secret) }).whereNull('used_at').where('expires_at', '>', new Date());
  const link = await (trx ? query.forUpdate() : query).first();
  const user = link ? await User.query(trx).findById(link.user_id) : undefined;
  if (!link || !user || !user.active) throw badRequest(INVALID_LINK);
  return { link, user };
}

export async function inspectPasswordLink(secret: string): Promise<PasswordLinkInfo> {
  const { link, user } = await liveLink(secret);
  return { purpose: link.purpose, email: user.email, name: user.name, expiresAt: new Date(link.expires_at).toISOString() };
}

/** Sets the password from an invitation or reset link; every earlier session of the user stops working. */
export async function setPasswordWithLink(secret: string, password: string, ip: string | null): Promise<{ ok: true; email: string }> {
  const passwordHash = await hashPassword(password);
  return User.transaction(async (trx) => {
    const { link, user } = await liveLink(secret, trx);
    const now = new Date();
    await User.query(trx).patch({ password_hash: passwordHash, sessions_valid_after: now }).where({ id: user.id });
    await PasswordLink.query(trx).patch({ used_at: now }).where({ user_id: user.id }).whereNull('used_at');
    await recordAudit(
      { actor: user, action: link.purpose === 'invitation' ? 'user.invitation-accepted' : 'user.password-reset', objectType: 'user', objectId: user.id, ip },
      trx,
    );
    return { ok: true as const, email: user.email };
  });
}

// --- admin changes ----------------------------------------------------------------------------

export async function inviteUser(config: Config, input: InviteUserBody, actor: Actor, ip: string | null): Promise<UserSummary> {
  return User.transaction(async (trx) => {
    const existing = await User.query(trx).whereRaw('lower(email) = lower(?)', [input.email]).first();
    if (existing) throw conflict('A user with this e-mail already exists', [{ path: 'email', message: 'is already taken' }]);
    const user = await User.query(trx).insertAndFetch({ email: input.email, name: input.name, role: input.role, password_hash: null, active: true });
    await recordAudit({ actor, action: 'user.invited', objectType: 'user', objectId: user.id, ip, details: { email: user.email, name: user.name, role: user.role } }, trx);
    await issueAndMailLink(config, user, 'invitation', trx);
    return userSummary(user);
  }).catch((error: unknown) => {
    // Two admins inviting the same address at once: the unique index decides.
    if ((error as { code?: string }).code === '23505') throw conflict('A user with this e-mail already exists', [{ path: 'email', message: 'is already taken' }]);
    throw error;
  });
}

/** Sends a new invitation link to a user who has not set a password yet (the old link stops working). */
export async function resendInvitation(config: Config, userId: number, actor: Actor, ip: string | null): Promise<UserSummary> {
  return User.transaction(async (trx) => {
    const user = await User.query(trx).findById(userId).forUpdate();
    if (!user) throw notFound('No such user');
    if (user.password_hash) throw conflict('This user has already set a password: use a password reset instead');
    if (!user.active) throw conflict('This user is deactivated: reactivate first');
    await recordAudit({ actor, action: 'user.invitation-resent', objectType: 'user', objectId: user.id, ip }, trx);
    await issueAndMailLink(config, user, 'invitation', trx);
    return userSummary(user);
  });
}

/** An admin sends a user a password-reset link (for an active user who has set a password). */
export async function sendPasswordReset(config: Config, userId: number, actor: Actor, ip: string | null): Promise<UserSummary> {
  return User.transaction(async (trx) => {
    const user = await User.query(trx).findById(userId).forUpdate();
    if (!user) throw notFound('No such user');
    if (!user.active) throw conflict('This user is deactivated: reactivate first');
    if (!user.password_hash) throw conflict('This user has not set a password yet: send a new invitation instead');
    await recordAudit({ actor, action: 'user.password-reset-sent', objectType: 'user', objectId: user.id, ip, details: { email: user.email } }, trx);
    await issueAndMailLink(config, user, 'reset', trx);
    return userSummary(user);
  });
}

/**
 * Renames, changes the role, deactivates or reactivates a user. Deactivation moves sessions_valid_after, so
 * the user's sessions die at once; API tokens die too because each request re-reads the active flag.
 */
export async function updateUser(userId: number, changes: UpdateUserBody, actor: Actor, ip: string | null): Promise<UserSummary> {
  return User.transaction(async (trx) => {
    const user = await User.query(trx).findById(userId).forUpdate();
    if (!user) throw notFound('No such user');
    if (user.id === actor.id && changes.role !== undefined && changes.role !== user.role) {
      throw conflict('You cannot change your own role (another admin can)', [{ path: 'role', message: 'is your own' }]);
    }
    if (user.id === actor.id && changes.active === false) {
      throw conflict('You cannot deactivate yourself (another admin can)', [{ path: 'active', message: 'is your own account' }]);
    }
    const patch: Partial<User> = {};
    const audits: { action: string; details: Record<string, unknown> }[] = [];
    if (changes.name !== undefined && changes.name !== user.name) {
      patch.name = changes.name;
      audits.push({ action: 'user.renamed', details: { from: user.name, to: changes.name } });
    }
    if (changes.role !== undefined && changes.role !== user.role) {
      patch.role = changes.role;
      audits.push({ action: 'user.role-changed', details: { from: user.role, to: changes.role } });
    }
    if (changes.active !== undefined && changes.active !== user.active) {
      patch.active = changes.active;
      if (!changes.active) patch.sessions_valid_after = new Date();
      audits.push({ action: changes.active ? 'user.reactivated' : 'user.deactivated', details: {} });
    }
    if (!audits.length) return userSummary(user);
    const updated = await user.$query(trx).patchAndFetch(patch);
    // A deactivated user's outstanding invitation or reset links must not come back to life on reactivation.
    if (patch.active === false) await PasswordLink.query(trx).patch({ used_at: new Date() }).where({ user_id: user.id }).whereNull('used_at');
    for (const audit of audits) await recordAudit({ actor, action: audit.action, objectType: 'user', objectId: user.id, ip, details: { email: user.email, ...audit.details } }, trx);
    return userSummary(updated);
  });
}

// --- self-service -----------------------------------------------------------------------------

/**
 * Mails a reset link when the address belongs to an active user; otherwise does nothing visible.
 * Callers answer the same 202 either way, so the endpoint never tells whether an address exists.
 */
export async function requestPasswordReset(config: Config, email: string, ip: string | null): Promise<void> {
  const user = await findUserByEmail(email);
  if (!user || !user.active) {
    await recordAudit({ action: 'user.password-reset-requested', ip, details: { email: email.slice(0, 320), matched: false } });
    return;
  }
  await User.transaction(async (trx) => {
    await recordAudit({ action: 'user.password-reset-requested', objectType: 'user', objectId: user.id, ip, details: { email: user.email, matched: true } }, trx);
    await issueAndMailLink(config, user, 'reset', trx);
  });
}

/** Handles a reset request after the answer is sent, so not even its timing tells whether the address exists. */
export function schedulePasswordReset(config: Config, email: string, ip: string | null): void {
  setImmediate(() => {
    requestPasswordReset(config, email, ip).catch((error: unknown) => console.error('[api] password reset failed:', (error as Error).message));
  });
}

/** A signed-in user changes their own password; all their other sessions end (API tokens stay: revoke those separately). */
export async function changeOwnPassword(actor: AuthenticatedUser, currentPassword: string, newPassword: string, ip: string | null): Promise<User> {
  const user = await User.query().findById(actor.id);
  if (!user) throw notFound('No such user');
  if (!(await passwordMatches(user, currentPassword))) throw unprocessable('The current password is not correct', [{ path: 'currentPassword', message: 'is not correct' }]);
  const passwordHash = await hashPassword(newPassword);
  return User.transaction(async (trx) => {
    const updated = await user.$query(trx).patchAndFetch({ password_hash: passwordHash, sessions_valid_after: new Date() });
    await recordAudit({ actor, action: 'user.password-changed', objectType: 'user', objectId: user.id, ip }, trx);
    return updated;
  });
}
