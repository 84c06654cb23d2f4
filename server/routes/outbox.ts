import { apiRouter } from '../http/route';
import { IdParamsSchema } from '../../shared/schemas/common';
import { OutboxMessageSchema, OutboxPageSchema, OutboxQuerySchema } from '../../shared/schemas/outbox';
import { getOutboxMessage, listOutbox } from '../services/outboxService';

export function outboxRoutes() {
  const api = apiRouter('/outbox', 'Outbox');

  api.route({
    method: 'get',
    path: '/',
    access: ['admin'],
    summary: 'Messages the local mail sink received, newest first',
    description: 'Invitations and password resets, so they can be followed end to end. `html` is untrusted content.',
    query: OutboxQuerySchema,
    response: OutboxPageSchema,
    handler: ({ query }) => listOutbox(query),
  });

  api.route({
    method: 'get',
    path: '/:id',
    access: ['admin'],
    summary: 'One received message',
    params: IdParamsSchema,
    response: OutboxMessageSchema,
    handler: ({ params }) => getOutboxMessage(Number(params.id)),
  });

  return api;
}
