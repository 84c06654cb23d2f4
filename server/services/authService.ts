import bcrypt from 'bcryptjs';
import jwt from 'jsonwebtoken';
import { User } from '../models/User';
import { unauthorized } from '../http/errors';
import { recordAudit } from './auditService';

const BCRYPT_ROUNDS = 11;
// Compared against when the e-mail is unknown, so both failures take the same time.
const DUMMY_HASH = bcrypt.hashSync('loadline-no-such-user', BCRYPT_ROUNDS);

export function hashPassword(password: string): Promise<string> {
  return bcrypt.hash(password, BCRYPT_ROUNDS);
}

export async function findUserByEmail(email: string): Promise<User | undefined> {
  return User.query().whereRaw('lower(email) = lower(?)', [email.trim()]).first();
}

/**
 * Checks e-mail and password, records the attempt in the audit trail and the last sign-in time.
 * Wrong password, unknown or deactivated user and a user without a password all answer the same 401.
 */
export async function signInWithPassword(email: string, password: string, ip: string | null): Promise<User> {
  const user = await findUserByEmail(email);
  const ok = await bcrypt.compare(password, user?.password_hash ?? DUMMY_HASH);
  if (!user || !user.password_hash || !ok || !user.active) {
    await recordAudit({ actor: user ? { id: user.id, email: user.email } : null, action: 'auth.sign-in-failed', ip, details: { email: email.slice(0, 320) } });
    throw unauthorized('E-mail or password is not correct');
  }
  // Straight to the table: a sign-in is not a change of the user's record (updated_at stays).
  await User.knexQuery().where({ id: user.id }).update({ last_sign_in_at: new Date() });
  await recordAudit({ actor: user, action: 'auth.sign-in', objectType: 'user', objectId: user.id, ip });
  return user;
}

export function issueSessionToken(user: User, secret: string, ttlSeconds: number): string {
  return jwt.sign({ sub: String(user.id), role: user.role, iat_ms: Date.now() }, secret, { algorithm: 'HS256', expiresIn: ttlSeconds });
}

/** True when a password matches the stored hash (false when the user has none yet). */
export async function passwordMatches(user: User, password: string): Promise<boolean> {
  return bcrypt.compare(password, user.password_hash ?? DUMMY_HASH).then((ok) => ok && !!user.password_hash);
}

/** Creates or resets a user's password and role (used for LOADLINE_ADMIN_* and the demo seed). */
export async function upsertUser(input: { email: string; name: string; role: User['role']; password: string }): Promise<User> {
  const existing = await findUserByEmail(input.email);
  if (existing) {
    // A changed password ends the user's earlier sessions; restarting with the same one changes nothing.
    const samePassword = await passwordMatches(existing, input.password);
    const passwordChange = samePassword ? {} : { password_hash: await hashPassword(input.password), sessions_valid_after: new Date() };
    return existing.$query().patchAndFetch({ name: input.name, role: input.role, active: true, ...passwordChange });
  }
  const passwordHash = await hashPassword(input.password);
  return User.query().insertAndFetch({ email: input.email.trim(), name: input.name, role: input.role, password_hash: passwordHash, active: true });
}
