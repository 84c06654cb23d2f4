import { createHash, createSecretKey } from 'node:crypto';
import type { RequestHandler, Request } from 'express';
import passport from 'passport';
import { Strategy as JwtStrategy, ExtractJwt } from 'passport-jwt';
import { Model } from 'objection';
import type { Knex } from 'knex';
import { ApiToken } from '../models/ApiToken';
import type { AuthenticatedUser } from './access';
import { sessionUser } from './userCache';

export const SESSION_COOKIE = 'loadline_session';
/** Named script tokens start with this, so they are never mistaken for a signed session token. */
export const API_TOKEN_PREFIX = 'llt_';

export function hashApiToken(secret: string): string {
  return createHash('sha256').update(secret).digest('hex');
}

function fromCookie(req: Request): string | null {
  return (req.cookies?.[SESSION_COOKIE] as string | undefined) ?? null;
}

function bearer(req: Request): string | null {
  return ExtractJwt.fromAuthHeaderAsBearerToken()(req);
}

/** Sessions are JWTs (cookie for the browser, Bearer for scripts); each request checks the current user row (see userCache.ts) so deactivation bites at once. */
export function configurePassport(jwtSecret: string): void {
  passport.use(
    new JwtStrategy(
      {
        // A KeyObject made once: a string secret makes jsonwebtoken build one per request (measured ~1.3 ms vs ~0.02 ms).
        secretOrKey: createSecretKey(Buffer.from(jwtSecret)) as unknown as string, // jsonwebtoken 9 takes KeyObjects; the typings lag
        algorithms: ['HS256'],
        jwtFromRequest: (req: Request) => {
          const token = bearer(req) ?? fromCookie(req);
          return token && !token.startsWith(API_TOKEN_PREFIX) ? token : null;
        },
      },
      (payload: { sub: string; iat: number; iat_ms?: number }, done: (err: unknown, user?: AuthenticatedUser | false) => void) => {
        sessionUser(Number(payload.sub))
          .then((user) => {
            if (!user || !user.active) return done(null, false);
            // A session issued before sessions_valid_after (deactivation, password change) is dead.
            // iat_ms is exact; tokens without it fall back to iat (seconds) with a second's grace.
            const issuedAt = typeof payload.iat_ms === 'number' ? payload.iat_ms : payload.iat * 1000 + 999;
            if (issuedAt < new Date(user.sessions_valid_after).getTime()) return done(null, false);
            done(null, { id: user.id, email: user.email, name: user.name, role: user.role, via: 'session' });
          })
          .catch(done);
      },
    ),
  );
}

/** The user of a named API token, token and user in one query (a script's every request pays for it). */
async function userFromApiToken(secret: string): Promise<AuthenticatedUser | null> {
  const row = (await (Model.knex() as Knex)('api_tokens as t')
    .join('users as u', 'u.id', 't.user_id')
    .where('t.token_hash', hashApiToken(secret))
    .whereNull('t.revoked_at')
    .where((q) => q.whereNull('t.expires_at').orWhere('t.expires_at', '>', new Date()))
    .where('u.active', true)
    .first('t.id as token_id', 't.last_used_at', 'u.id', 'u.email', 'u.name', 'u.role')) as
    | { token_id: number; last_used_at: Date | null; id: number; email: string; name: string; role: AuthenticatedUser['role'] }
    | undefined;
  if (!row) return null;
  // "Last used" to the minute is enough, and spares a write on every scripted request.
  const now = new Date();
  if (!row.last_used_at || now.getTime() - new Date(row.last_used_at).getTime() > 60_000) {
    await ApiToken.query().patch({ last_used_at: now }).where({ id: row.token_id });
  }
  return { id: row.id, email: row.email, name: row.name, role: row.role, via: 'api-token' };
}

/** Sets req.user when the request carries valid credentials; never rejects by itself (requireAccess does). */
export const authenticate: RequestHandler = (req, res, next) => {
  const token = bearer(req);
  if (token?.startsWith(API_TOKEN_PREFIX)) {
    userFromApiToken(token)
      .then((user) => {
        if (user) req.user = user;
        next();
      })
      .catch(next);
    return;
  }
  passport.authenticate('jwt', { session: false }, (err: unknown, user: AuthenticatedUser | false) => {
    if (err) return next(err);
    if (user) req.user = user;
    next();
  })(req, res, next);
};
