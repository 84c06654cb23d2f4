import type { ReactNode } from 'react';
import { useId, cloneElement, isValidElement } from 'react';

/**
 * A labelled form control with its hint and error. The child input gets the id, aria-invalid and
 * aria-describedby, so labels work with getByLabel and screen readers read the error.
 */
export function Field({ label, hint, error, children, className = '' }: { label: string; hint?: ReactNode; error?: string; children: ReactNode; className?: string }) {
  const id = useId();
  const describedBy = [hint ? `${id}-hint` : '', error ? `${id}-error` : ''].filter(Boolean).join(' ') || undefined;
  const control = isValidElement<Record<string, unknown>>(children)
    ? cloneElement(children, { id, 'aria-invalid': error ? true : undefined, 'aria-describedby': describedBy })
    : children;
  return (
    <div className={`flex flex-col gap-1 ${className}`}>
      <label htmlFor={id} className="text-xs font-medium text-ink-soft">
        {label}
      </label>
      {control}
      {hint && !error ? (
        <p id={`${id}-hint`} className="text-xs text-ink-faint">
          {hint}
        </p>
      ) : null}
      {error ? (
        <p id={`${id}-error`} className="text-xs font-medium text-breach">
          {error}
        </p>
      ) : null}
    </div>
  );
}
