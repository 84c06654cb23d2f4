import { format, formatDistanceToNowStrict, parseISO } from 'date-fns';

/** `2026-12-02 14:05` in the viewer's time zone; an em dash for none. */
export function formatDateTime(iso: string | null | undefined): string {
  if (!iso) return '—';
  return format(parseISO(iso), 'yyyy-MM-dd HH:mm');
}

export function formatDateTimeSeconds(iso: string | null | undefined): string {
  if (!iso) return '—';
  return format(parseISO(iso), 'yyyy-MM-dd HH:mm:ss');
}

/** `3 hours ago` / `in 2 days`. */
export function formatRelative(iso: string | null | undefined): string {
  if (!iso) return '—';
  return formatDistanceToNowStrict(parseISO(iso), { addSuffix: true });
}

export function formatCount(value: number): string {
  return value.toLocaleString('en-GB');
}

/** `2026-12-02` in the viewer's time zone. */
export function formatDate(iso: string | null | undefined): string {
  if (!iso) return '—';
  return format(parseISO(iso), 'yyyy-MM-dd');
}
