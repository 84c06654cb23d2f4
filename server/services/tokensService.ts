import { randomBytes } from 'node:crypto';
import { ApiToken } from '../models/ApiToken';
import { API_TOKEN_PREFIX, hashApiToken } from '../auth/passport';
import { conflict, forbidden, notFound } from '../http/errors';
import { recordAudit } from './auditService';
import type { AuthenticatedUser } from '../auth/access';
import type { ApiTokenView, CreateApiTokenBody, CreatedApiToken } from '../../shared/schemas/tokens';

/** A user may hold at most this many live tokens: enough for scripts, few enough to review. */
export const MAX_ACTIVE_TOKENS = 25;
/** Characters of the secret kept in clear to tell tokens apart (`llt_` plus 8). */
const PREFIX_LENGTH = API_TOKEN_PREFIX.length + 8;

function iso(value: Date | string | null): string | null {
  return value === null ? null : new Date(value).toISOString();
}

export function tokenView(token: ApiToken, now = new Date()): ApiTokenView {
  const status = token.revoked_at ? 'revoked' : token.expires_at && new Date(token.expires_at) <= now ? 'expired' : 'active';
  return {
    id: token.id,
    name: token.name,
    prefix: token.prefix,
    status,
    createdAt: iso(token.created_at)!,
    lastUsedAt: iso(token.last_used_at),
    expiresAt: iso(token.expires_at),
    revokedAt: iso(token.revoked_at),
  };
}

/** The caller's own tokens, newest first (revoked and expired ones too, for the record). */
export async function listTokens(userId: number): Promise<ApiTokenView[]> {
  const rows = await ApiToken.query().where({ user_id: userId }).orderBy([{ column: 'created_at', order: 'desc' }, { column: 'id', order: 'desc' }]);
  const now = new Date();
  return rows.map((row) => tokenView(row, now));
}

/** Creates a named token; the secret is answered once and only its SHA-256 is stored. */
export async function createToken(user: AuthenticatedUser, input: CreateApiTokenBody, ip: string | null): Promise<CreatedApiToken> {
  // A leaked script token must not be able to mint more tokens: creating one needs a signed-in session.
  if (user.via !== 'session') throw forbidden('API tokens are created from a signed-in session, not with another API token');
  return ApiToken.transaction(async (trx) => {
    const now = new Date();
    const live = await ApiToken.query(trx)
      .where({ user_id: user.id })
      .whereNull('revoked_at')
      .where((q) => q.whereNull('expires_at').orWhere('expires_at', '>', now))
      .resultSize();
    if (live >= MAX_ACTIVE_TOKENS) throw conflict(`You already have ${MAX_ACTIVE_TOKENS} active API tokens: revoke one first`);
    const secret = `${API_TOKEN_PREFIX}${randomBytes(30).toString('base64url')}`;
    const expiresAt = input.expiresInDays ? new Date(now.getTime() + input.expiresInDays * 86_400_000) : null;
    const token = await ApiToken.query(trx).insertAndFetch({
      user_id: user.id,
      name: input.name,
      token_hash: hashApiToken(secret),
      prefix: secret.slice(0, PREFIX_LENGTH),
      expires_at: expiresAt,
    });
    await recordAudit(
      { actor: user, action: 'token.created', objectType: 'api_token', objectId: token.id, ip, details: { name: token.name, prefix: token.prefix, expiresAt: iso(expiresAt) } },
      trx,
    );
    return { token: tokenView(token), secret };
  });
}

/** Revokes one of the caller's own tokens at once (someone else's answers 404, as if it did not exist). */
export async function revokeToken(user: AuthenticatedUser, tokenId: number, ip: string | null): Promise<ApiTokenView> {
  return ApiToken.transaction(async (trx) => {
    const token = await ApiToken.query(trx).where({ id: tokenId, user_id: user.id }).forUpdate().first();
    if (!token) throw notFound('No such API token of yours');
    if (token.revoked_at) return tokenView(token);
    const revoked = await token.$query(trx).patchAndFetch({ revoked_at: new Date() });
    await recordAudit({ actor: user, action: 'token.revoked', objectType: 'api_token', objectId: token.id, ip, details: { name: token.name, prefix: token.prefix } }, trx);
    return tokenView(revoked);
  });
}
