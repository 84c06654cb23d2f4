import { z } from 'zod';
import { apiRouter } from '../http/route';
import { openApiDocument } from '../openapi';

export function openApiRoutes() {
  const api = apiRouter('', 'API description');
  api.route({
    method: 'get',
    path: '/openapi.json',
    access: 'public',
    summary: 'This OpenAPI 3 document',
    response: z.record(z.string(), z.unknown()),
    handler: () => openApiDocument(),
  });
  return api;
}
