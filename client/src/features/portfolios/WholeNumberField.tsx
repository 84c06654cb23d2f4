import { useEffect, useState } from 'react';
import { Field } from '../../components/Field';

/**
 * A whole-number setting typed as a draft: nothing is applied while typing (clearing the field and typing 5 gives 5,
 * not 15); on Enter or leaving the field the draft is checked, clamped to [min, max] with a message when out of range,
 * or put back with a message when it is not a whole number. Escape puts the applied value back.
 */
export function WholeNumberField({
  label,
  value,
  min,
  max,
  onCommit,
  className = 'w-28',
  what,
}: {
  label: string;
  value: number;
  min: number;
  max: number;
  onCommit: (value: number) => void;
  className?: string;
  /** How the message names the setting, e.g. "The horizon". */
  what: string;
}) {
  const [draft, setDraft] = useState(String(value));
  const [message, setMessage] = useState<string | null>(null);
  // The applied value can change from outside (or be put back): show it.
  useEffect(() => setDraft(String(value)), [value]);

  const range = `${min.toLocaleString('en-GB')}–${max.toLocaleString('en-GB')}`;
  const commit = () => {
    const text = draft.trim();
    if (!/^[+-]?\d+$/.test(text)) {
      setMessage(`${what} must be a whole number (${range}); kept ${value}.`);
      setDraft(String(value));
      return;
    }
    const typed = Number(text);
    const next = Math.min(max, Math.max(min, typed));
    setMessage(next === typed ? null : `${what} runs from ${range}: ${text} was set to ${next}.`);
    setDraft(String(next));
    if (next !== value) onCommit(next);
  };

  return (
    <Field label={label} error={message ?? undefined} className="max-w-64">
      <input
        type="text"
        inputMode="numeric"
        autoComplete="off"
        className={`field-input ${className}`}
        value={draft}
        onChange={(e) => setDraft(e.target.value)}
        onBlur={commit}
        onKeyDown={(e) => {
          if (e.key === 'Enter') commit();
          else if (e.key === 'Escape') {
            setDraft(String(value));
            setMessage(null);
          }
        }}
      />
    </Field>
  );
}
