import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { Validator } from '@seriousme/openapi-schema-validator';
import { testContext } from '../helpers/app';
import { registeredRoutes } from '../../server/http/route';

const ctx = testContext();
let doc: {
  openapi: string;
  info: { title: string };
  paths: Record<string, Record<string, { summary?: string; tags?: string[]; responses: Record<string, unknown>; requestBody?: { content: Record<string, { schema: unknown }> }; parameters?: { in: string; name: string }[]; security?: unknown[] }>>;
  components: { schemas?: Record<string, unknown>; securitySchemes?: Record<string, unknown> };
};

beforeAll(async () => {
  const res = await request(ctx.app).get('/api/openapi.json');
  expect(res.status).toBe(200);
  expect(res.headers['content-type']).toMatch(/application\/json/);
  doc = res.body;
});
afterAll(() => ctx.close());

describe('OpenAPI document', () => {
  it('is a valid OpenAPI 3.0 document (checked against the official schema)', async () => {
    const validator = new Validator();
    const result = await validator.validate(doc as unknown as Record<string, unknown>);
    expect(result.errors ?? [], JSON.stringify(result.errors, null, 1)?.slice(0, 2000)).toEqual([]);
    expect(result.valid).toBe(true);
    expect(doc.openapi).toMatch(/^3\.0\./);
    expect(doc.info.title).toBe('Loadline API');
  });

  it('describes every registered route with a summary, tags, its parameters, body and answers', () => {
    const routes = registeredRoutes();
    expect(routes.length).toBeGreaterThan(15);
    for (const route of routes) {
      const where = `${route.method.toUpperCase()} ${route.path}`;
      const op = doc.paths[route.path.replace(/:(\w+)/g, '{$1}')]?.[route.method];
      expect(op, `${where} missing from the document`).toBeDefined();
      expect(op.summary?.trim(), `${where} has no summary`).toBeTruthy();
      expect(op.tags?.length, `${where} has no tag`).toBeGreaterThan(0);
      expect(Object.keys(op.responses).some((status) => /^2\d\d$/.test(status)), `${where} has no success answer`).toBe(true);
      for (const name of [...route.path.matchAll(/:(\w+)/g)].map((m) => m[1])) {
        expect(op.parameters?.some((p) => p.in === 'path' && p.name === name), `${where} does not describe path parameter ${name}`).toBe(true);
      }
      if (route.spec.body) expect(Object.values(op.requestBody?.content ?? {})[0]?.schema, `${where} has no body schema`).toBeDefined();
      if (route.access !== 'public') {
        expect(op.responses['401'], `${where} does not document 401`).toBeDefined();
        expect(op.security?.length, `${where} has no security`).toBeGreaterThan(0);
      }
      if (Array.isArray(route.access)) expect(op.responses['403'], `${where} does not document 403`).toBeDefined();
    }
    const documented = Object.values(doc.paths).reduce((n, ops) => n + Object.keys(ops).length, 0);
    expect(documented).toBe(routes.length);
  });

  it('resolves every $ref to a component', () => {
    const refs = new Set<string>();
    const walk = (node: unknown) => {
      if (Array.isArray(node)) node.forEach(walk);
      else if (node && typeof node === 'object') {
        for (const [key, value] of Object.entries(node)) {
          if (key === '$ref' && typeof value === 'string') refs.add(value);
          else walk(value);
        }
      }
    };
    walk(doc);
    expect(refs.size).toBeGreaterThan(5);
    for (const ref of refs) {
      const [, section, name] = /^#\/components\/(\w+)\/(.+)$/.exec(ref) ?? [];
      expect((doc.components as Record<string, Record<string, unknown>>)[section]?.[name], `unresolved ${ref}`).toBeDefined();
    }
  });

  it('names the shared schemas as components, so scripts can reuse them', () => {
    for (const name of ['SignInBody', 'PublicUser', 'UserSummary', 'InviteUserBody', 'ApiToken', 'CreatedApiToken', 'AuditEvent', 'AuditPage', 'OutboxMessage', 'ApiError']) {
      expect(doc.components.schemas?.[name], name).toBeDefined();
    }
    expect(Object.keys(doc.components.securitySchemes ?? {})).toEqual(expect.arrayContaining(['bearer', 'cookie']));
  });
});
