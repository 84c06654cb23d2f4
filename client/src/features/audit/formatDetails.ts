/**
 * An audit event's details as readable `key: value` pairs joined by "; " (the CSV export keeps the JSON).
 * Nested objects name their path (`limits.warning: 0.8`), lists of plain values are comma-joined, strings are shown
 * without quotes; anything else (a list of objects) stays compact JSON.
 */
export function formatAuditDetails(details: Record<string, unknown>): string {
  return detailPairs(details, '')
    .map(([key, value]) => `${key}: ${value}`)
    .join('; ');
}

function detailPairs(value: Record<string, unknown>, prefix: string): [string, string][] {
  return Object.entries(value).flatMap(([key, inner]): [string, string][] => {
    const path = prefix ? `${prefix}.${key}` : key;
    if (isPlainObject(inner)) return Object.keys(inner).length ? detailPairs(inner, path) : [[path, '(none)']];
    return [[path, formatValue(inner)]];
  });
}

const isPlainObject = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);

function formatValue(value: unknown): string {
  if (value === null || value === undefined) return '(none)';
  if (typeof value === 'boolean') return value ? 'yes' : 'no';
  if (typeof value === 'string') return value;
  if (typeof value === 'number' || typeof value === 'bigint') return String(value);
  if (Array.isArray(value)) {
    if (!value.length) return '(none)';
    return value.every((v) => v === null || ['string', 'number', 'boolean'].includes(typeof v)) ? value.map(formatValue).join(', ') : JSON.stringify(value);
  }
  return JSON.stringify(value);
}
