import { OutboxMessage } from '../models/OutboxMessage';
import { notFound } from '../http/errors';
import { containsPattern } from '../db/like';
import type { OutboxMessageView, OutboxPage, OutboxQuery } from '../../shared/schemas/outbox';

function outboxView(message: OutboxMessage): OutboxMessageView {
  return {
    id: Number(message.id),
    receivedAt: new Date(message.received_at).toISOString(),
    from: message.from_address,
    to: message.to_address,
    subject: message.subject,
    text: message.text,
    html: message.html,
  };
}

/** Messages the local sink received, newest first. */
export async function listOutbox(query: OutboxQuery): Promise<OutboxPage> {
  const filtered = () => {
    const q = OutboxMessage.query();
    if (query.to) q.whereRaw(`to_address ILIKE ? ESCAPE '\\'`, [containsPattern(query.to)]);
    return q;
  };
  const [rows, total] = await Promise.all([
    filtered().orderBy([{ column: 'received_at', order: 'desc' }, { column: 'id', order: 'desc' }]).limit(query.pageSize).offset((query.page - 1) * query.pageSize),
    filtered().resultSize(),
  ]);
  return { items: rows.map(outboxView), total, page: query.page, pageSize: query.pageSize };
}

export async function getOutboxMessage(id: number): Promise<OutboxMessageView> {
  const message = await OutboxMessage.query().findById(id);
  if (!message) throw notFound('No such message');
  return outboxView(message);
}
