import { Button } from './Button';

/** Newer / Older paging for lists the server pages (newest first), with "page / pages" between. */
export function Pager({ page, total, pageSize, onPage }: { page: number; total: number; pageSize: number; onPage: (page: number) => void }) {
  const pages = Math.max(1, Math.ceil(total / pageSize));
  return (
    <span className="flex items-center gap-2 text-xs text-ink-soft" aria-label="Pages">
      <Button size="sm" disabled={page <= 1} onClick={() => onPage(page - 1)}>
        Newer
      </Button>
      <span className="font-mono tabular-nums">
        {page} / {pages}
      </span>
      <Button size="sm" disabled={page >= pages} onClick={() => onPage(page + 1)}>
        Older
      </Button>
    </span>
  );
}
