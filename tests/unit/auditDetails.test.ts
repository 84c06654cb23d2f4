import { describe, expect, it } from 'vitest';
import { formatAuditDetails } from '../../client/src/features/audit/formatDetails';

describe('audit details shown as key: value pairs', () => {
  it('writes flat values without quotes, yes/no for booleans, (none) for null and empty lists', () => {
    expect(formatAuditDetails({ name: 'Core list', size: 12, approved: true, comment: null, symbols: [] })).toBe('name: Core list; size: 12; approved: yes; comment: (none); symbols: (none)');
  });

  it('names nested paths and comma-joins lists of plain values', () => {
    expect(formatAuditDetails({ limits: { warning: 0.8, breach: 1 }, symbols: ['QFA', 'QFB'] })).toBe('limits.warning: 0.8; limits.breach: 1; symbols: QFA, QFB');
  });

  it('keeps a list of objects as compact JSON and an empty record as nothing', () => {
    expect(formatAuditDetails({ rows: [{ row: 2, message: 'unknown symbol' }] })).toBe('rows: [{"row":2,"message":"unknown symbol"}]');
    expect(formatAuditDetails({})).toBe('');
  });
});
