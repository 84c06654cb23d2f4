import type { ReactNode } from 'react';

/** A white panel on the warm-grey page, with an optional title row. */
export function Card({ title, actions, children, className = '', padded = true }: { title?: ReactNode; actions?: ReactNode; children: ReactNode; className?: string; padded?: boolean }) {
  return (
    <section className={`rounded-lg border border-line bg-surface shadow-xs ${className}`}>
      {title || actions ? (
        <div className="flex items-center justify-between gap-3 border-b border-line px-4 py-2.5">
          {title ? <h2 className="text-sm font-semibold text-ink">{title}</h2> : <span />}
          {actions ? <div className="flex items-center gap-2">{actions}</div> : null}
        </div>
      ) : null}
      <div className={padded ? 'p-4' : ''}>{children}</div>
    </section>
  );
}
