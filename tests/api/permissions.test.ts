import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { testContext, signIn } from '../helpers/app';
import { registeredRoutes } from '../../server/http/route';
import { ROLES, type Role } from '../../shared/schemas/common';

/**
 * Every API route × every role (and anonymous). Written out here, independently of the route declarations:
 * 'public' → anyone; 'signed-in' → every role; otherwise the roles allowed.
 * One line per route: `['METHOD /api/path', roles]`. Adding a route without a line here fails this test.
 */
type Allowed = 'public' | 'signed-in' | readonly Role[];
const TABLE: [string, Allowed][] = [
  // Sign-in and one-time password links
  ['POST /api/auth/sign-in', 'public'],
  ['POST /api/auth/sign-out', 'public'],
  ['GET /api/auth/me', 'signed-in'],
  ['POST /api/auth/password', 'signed-in'],
  ['POST /api/auth/password-reset', 'public'],
  ['POST /api/auth/password-link', 'public'],
  ['POST /api/auth/set-password', 'public'],
  // Users (admin)
  ['GET /api/users', ['admin']],
  ['POST /api/users', ['admin']],
  ['PATCH /api/users/:id', ['admin']],
  ['POST /api/users/:id/invitation', ['admin']],
  ['POST /api/users/:id/password-reset', ['admin']],
  // Named API tokens (own tokens)
  ['GET /api/tokens', 'signed-in'],
  ['POST /api/tokens', 'signed-in'],
  ['DELETE /api/tokens/:id', 'signed-in'],
  // Audit trail
  ['GET /api/audit', ['admin', 'compliance']],
  ['GET /api/audit/actions', ['admin', 'compliance']],
  ['GET /api/audit/export.csv', ['admin', 'compliance']],
  // Outbox of the local mail sink
  ['GET /api/outbox', ['admin']],
  ['GET /api/outbox/:id', ['admin']],
  // Model runs (fits, lifecycle, comparison)
  ['POST /api/model-runs', ['analyst', 'admin']],
  ['GET /api/model-runs', 'signed-in'],
  ['GET /api/model-runs/approved', 'signed-in'],
  ['GET /api/model-runs/:id', 'signed-in'],
  ['GET /api/model-runs/:id/results', 'signed-in'],
  ['GET /api/model-runs/:id/loadings', 'signed-in'],
  ['GET /api/model-runs/:id/factor-scores', 'signed-in'],
  ['GET /api/model-runs/:id/compare', 'signed-in'],
  ['POST /api/model-runs/:id/cancel', ['analyst', 'admin']],
  ['POST /api/model-runs/:id/approve', ['analyst', 'admin']],
  ['POST /api/model-runs/:id/retire', ['analyst', 'admin']],
  // Saved asset lists (a run's universe; everyone signed in reads, the owner or an admin deletes)
  ['GET /api/asset-lists', 'signed-in'],
  ['GET /api/asset-lists/:id', 'signed-in'],
  ['POST /api/asset-lists', ['analyst', 'admin']],
  ['DELETE /api/asset-lists/:id', ['analyst', 'admin']],
  // Return-series imports (analyst and admin import; everyone signed in reads)
  ['POST /api/imports', ['analyst', 'admin']],
  ['POST /api/imports/:id/commit', ['analyst', 'admin']],
  ['GET /api/imports/progress/:ref', ['analyst', 'admin']],
  ['GET /api/imports', 'signed-in'],
  ['GET /api/imports/:id', 'signed-in'],
  ['GET /api/imports/:id/problems.csv', 'signed-in'],
  // Assets and their metadata
  ['GET /api/assets', 'signed-in'],
  ['POST /api/assets/metadata', ['analyst', 'admin']],
  ['GET /api/assets/by-symbol/:symbol/returns', 'signed-in'],
  ['GET /api/assets/:id', 'signed-in'],
  ['PATCH /api/assets/:id', ['analyst', 'admin']],
  // Data quality of the stored series
  ['GET /api/data-quality/assets', 'signed-in'],
  ['GET /api/data-quality/coverage', 'signed-in'],
  // Portfolios (PMs and admins edit; every role reads, row-level rules in the service)
  ['GET /api/portfolios', ['admin', 'analyst', 'pm', 'compliance']],
  ['POST /api/portfolios', ['admin', 'pm']],
  ['GET /api/portfolios/:id', ['admin', 'analyst', 'pm', 'compliance']],
  ['PATCH /api/portfolios/:id', ['admin', 'pm']],
  ['DELETE /api/portfolios/:id', ['admin', 'pm']],
  ['PUT /api/portfolios/:id/holdings', ['admin', 'pm']],
  ['POST /api/portfolios/:id/holdings/csv', ['admin', 'pm']],
  ['GET /api/portfolios/:id/risk', ['admin', 'analyst', 'pm', 'compliance']],
  ['POST /api/portfolios/:id/risk/what-if', ['admin', 'analyst', 'pm', 'compliance']],
  // API description
  ['GET /api/openapi.json', 'public'],
];

const ctx = testContext();
const tokens = {} as Record<Role, string>;

beforeAll(async () => {
  for (const role of ROLES) tokens[role] = await signIn(ctx.app, role);
});
afterAll(() => ctx.close());

/** Path parameters become 0: a well-formed id that names nothing, so no request changes stored data. */
function concrete(path: string): string {
  return path.replace(/:(\w+)/g, '0');
}

function send(method: string, path: string, token?: string) {
  const agent = request(ctx.app);
  const call = (agent as unknown as Record<string, (url: string) => request.Test>)[method.toLowerCase()](concrete(path));
  if (token) call.set('Authorization', `Bearer ${token}`);
  return method === 'GET' || method === 'DELETE' ? call : call.send({});
}

describe('permission table', () => {
  it('has exactly one row per registered route', () => {
    const registered = registeredRoutes().map((r) => `${r.method.toUpperCase()} ${r.path}`).sort();
    const rows = TABLE.map(([route]) => route);
    expect(new Set(rows).size, 'duplicate rows').toBe(rows.length);
    const missing = registered.filter((route) => !rows.includes(route));
    const stale = rows.filter((route) => !registered.includes(route));
    expect(missing, 'registered routes without a row').toEqual([]);
    expect(stale, 'rows naming no registered route').toEqual([]);
  });

  it('agrees with what each route declares', () => {
    for (const [route, allowed] of TABLE) {
      const declared = registeredRoutes().find((r) => `${r.method.toUpperCase()} ${r.path}` === route);
      if (!declared) continue; // reported by the test above
      const norm = (a: Allowed) => (typeof a === 'string' ? a : [...a].sort().join(','));
      expect(norm(declared.access), route).toBe(norm(allowed));
    }
  });

  for (const [route, allowed] of TABLE) {
    const [method, path] = route.split(' ');
    it(`${route}: anonymous → ${allowed === 'public' ? 'allowed' : '401'}`, async () => {
      const res = await send(method, path);
      if (allowed === 'public') expect([401, 403], `${route} anonymous got ${res.status}`).not.toContain(res.status);
      else expect(res.status, `${route} anonymous`).toBe(401);
    });
    for (const role of ROLES) {
      const ok = allowed === 'public' || allowed === 'signed-in' || allowed.includes(role);
      it(`${route}: ${role} → ${ok ? 'allowed' : '403'}`, async () => {
        const res = await send(method, path, tokens[role]);
        if (ok) expect([401, 403], `${route} as ${role} got ${res.status} ${JSON.stringify(res.body)}`).not.toContain(res.status);
        else expect(res.status, `${route} as ${role}`).toBe(403);
      });
    }
  }
});
