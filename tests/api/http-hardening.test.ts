import { afterAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { testContext } from '../helpers/app';
import { createApp } from '../../server/app';

const ctx = testContext();
afterAll(() => ctx.close());

describe('HTTP hardening', () => {
  it('sends Helmet headers and hides the framework', async () => {
    const res = await request(ctx.app).get('/api/openapi.json');
    expect(res.headers['x-powered-by']).toBeUndefined();
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['referrer-policy']).toBe('no-referrer');
    expect(res.headers['content-security-policy']).toMatch(/default-src 'self'/);
    expect(res.headers['content-security-policy']).not.toMatch(/https?:\/\//); // nothing from a CDN
    expect(res.headers['strict-transport-security']).toBeDefined();
  });

  it('keeps CORS closed by default', async () => {
    const res = await request(ctx.app).get('/api/auth/me').set('Origin', 'https://elsewhere.example');
    expect(res.headers['access-control-allow-origin']).toBeUndefined();
    const preflight = await request(ctx.app).options('/api/auth/sign-in').set('Origin', 'https://elsewhere.example').set('Access-Control-Request-Method', 'POST');
    expect(preflight.headers['access-control-allow-origin']).toBeUndefined();
    expect(preflight.headers['access-control-allow-credentials']).toBeUndefined();
  });

  it('opens CORS only to the origins listed in CORS_ORIGINS', async () => {
    const app = createApp({ ...ctx.config, corsOrigins: ['https://desk.quillfield.example'] }, { serveClient: false });
    const allowed = await request(app).get('/api/auth/me').set('Origin', 'https://desk.quillfield.example');
    expect(allowed.headers['access-control-allow-origin']).toBe('https://desk.quillfield.example');
    const other = await request(app).get('/api/auth/me').set('Origin', 'https://elsewhere.example');
    expect(other.headers['access-control-allow-origin']).toBeUndefined();
  });

  it('answers unknown API routes with a JSON 404, not the single-page app', async () => {
    const res = await request(ctx.app).get('/api/no-such-thing');
    expect(res.status).toBe(404);
    expect(res.body).toEqual({ error: 'No such API route' });
  });
});
