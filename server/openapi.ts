import { OpenAPIRegistry, OpenApiGeneratorV3 } from '@asteasolutions/zod-to-openapi';
import { z } from 'zod';
import { ApiErrorSchema } from '../shared/schemas/common';
import { registeredRoutes } from './http/route';

/** OpenAPI 3 document generated from the same zod schemas that validate each route. */
export function openApiDocument() {
  const registry = new OpenAPIRegistry();
  registry.registerComponent('securitySchemes', 'bearer', { type: 'http', scheme: 'bearer', description: 'A session token from POST /api/auth/sign-in, or a named API token' });
  registry.registerComponent('securitySchemes', 'cookie', { type: 'apiKey', in: 'cookie', name: 'loadline_session' });
  const errorContent = { 'application/json': { schema: ApiErrorSchema } };
  for (const route of registeredRoutes()) {
    const { spec } = route;
    const openPath = route.path.replace(/:(\w+)/g, '{$1}');
    const roles = route.access === 'public' ? 'anyone' : route.access === 'signed-in' ? 'any signed-in user' : route.access.join(', ');
    const success = spec.status ?? (spec.response || spec.responseContentType ? 200 : 204);
    const responses: Record<number, { description: string; content?: Record<string, { schema: z.ZodType }> }> = {
      [success]: {
        description: 'Success',
        ...(spec.response ? { content: { 'application/json': { schema: spec.response } } } : {}),
        ...(spec.responseContentType ? { content: { [spec.responseContentType]: { schema: z.string() } } } : {}),
      },
      422: { description: 'Invalid input: `issues` names each field or row', content: errorContent },
    };
    if (route.access !== 'public') {
      responses[401] = { description: 'Not signed in', content: errorContent };
      if (route.access !== 'signed-in') responses[403] = { description: 'Role not allowed', content: errorContent };
    }
    registry.registerPath({
      method: route.method,
      path: openPath,
      tags: [route.tag],
      summary: spec.summary,
      description: `${spec.description ? `${spec.description}\n\n` : ''}Allowed: ${roles}.`,
      security: route.access === 'public' ? [] : [{ bearer: [] }, { cookie: [] }],
      request: {
        ...(spec.params ? { params: spec.params as z.ZodObject } : {}),
        ...(spec.query ? { query: spec.query as z.ZodObject } : {}),
        ...(spec.body ? { body: { content: { [spec.bodyContentType ?? 'application/json']: { schema: spec.body } } } } : {}),
      },
      responses,
    });
  }
  return new OpenApiGeneratorV3(registry.definitions).generateDocument({
    openapi: '3.0.3',
    info: {
      title: 'Loadline API',
      version: '1',
      description: 'Portfolio risk console: return series, factor-model fits, portfolio risk, limits. Figures are model estimates, not guarantees.',
    },
    servers: [{ url: '/' }],
  });
}
