import type { ReactNode } from 'react';
import { useDocumentTitle } from '../../lib/useDocumentTitle';
import { Wordmark } from '../../app/Wordmark';

/** The frame of the public pages (sign-in, password links): a single calm card on the page background. */
export function AuthFrame({ title, children, footer }: { title: string; children: ReactNode; footer?: ReactNode }) {
  useDocumentTitle(title);
  return (
    <div className="flex min-h-screen flex-col items-center justify-center px-4 py-10">
      <div className="w-full max-w-sm">
        <Wordmark className="mb-6" />
        <main className="rounded-lg border border-line bg-surface p-6 shadow-sm">
          <h1 className="mb-4 text-lg font-semibold">{title}</h1>
          {children}
        </main>
        {footer ? <div className="mt-4 text-center text-sm text-ink-soft">{footer}</div> : null}
        <p className="mt-8 text-center text-xs text-ink-faint">Loadline · factor-model risk for portfolio teams</p>
      </div>
    </div>
  );
}
