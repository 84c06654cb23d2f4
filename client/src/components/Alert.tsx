import type { ReactNode } from 'react';
import type { ApiIssue } from '../lib/api';
import { ApiError } from '../lib/api';

export type Tone = 'info' | 'ok' | 'warn' | 'breach';

const TONES: Record<Tone, { box: string; mark: string; word: string }> = {
  info: { box: 'border-info/40 bg-info-soft text-ink', mark: 'text-info', word: 'Note' },
  ok: { box: 'border-ok/40 bg-ok-soft text-ink', mark: 'text-ok', word: 'Done' },
  warn: { box: 'border-warn/40 bg-warn-soft text-ink', mark: 'text-warn', word: 'Warning' },
  breach: { box: 'border-breach/40 bg-breach-soft text-ink', mark: 'text-breach', word: 'Error' },
};

const MARKS: Record<Tone, string> = { info: 'i', ok: '✓', warn: '!', breach: '×' };

/**
 * A message box. Errors and warnings use role="alert" so assistive technology announces them; the tone is also
 * spelled out in words and a symbol, never by colour alone.
 */
export function Alert({ tone = 'info', title, children, issues }: { tone?: Tone; title?: ReactNode; children?: ReactNode; issues?: ApiIssue[] }) {
  const style = TONES[tone];
  const urgent = tone === 'breach' || tone === 'warn';
  return (
    <div role={urgent ? 'alert' : 'status'} className={`flex gap-2.5 rounded-md border px-3 py-2 text-sm ${style.box}`}>
      <span aria-hidden className={`mt-px inline-flex h-4.5 w-4.5 shrink-0 items-center justify-center rounded-full border border-current text-[11px] font-bold ${style.mark}`}>
        {MARKS[tone]}
      </span>
      <div className="min-w-0">
        <span className="sr-only">{style.word}: </span>
        {title ? <p className="font-medium">{title}</p> : null}
        {children ? <div className={title ? 'mt-0.5 text-ink-soft' : ''}>{children}</div> : null}
        {issues && issues.length ? (
          <ul className="mt-1 list-disc space-y-0.5 pl-4 text-ink-soft">
            {issues.slice(0, 100).map((issue, index) => (
              <li key={index}>
                <span className="font-mono text-xs">{issue.path}</span>: {issue.message}
              </li>
            ))}
          </ul>
        ) : null}
      </div>
    </div>
  );
}

/** The standard way to show what a query or mutation threw; pass showIssues={false} when a form shows them beside its fields. */
export function ErrorAlert({ error, title, showIssues = true }: { error: unknown; title?: string; showIssues?: boolean }) {
  if (!error) return null;
  const message = error instanceof Error ? error.message : 'Something went wrong';
  const issues = showIssues && error instanceof ApiError ? error.issues : undefined;
  // A page opened by address that the role cannot use: say so plainly rather than as a failure.
  if (error instanceof ApiError && error.status === 403)
    return (
      <Alert tone="warn" title="Not available to your role">
        {message.replace(/\.$/, '')}. Ask an administrator if you need access.
      </Alert>
    );
  return (
    <Alert tone="breach" title={title} issues={issues}>
      {message}
    </Alert>
  );
}
