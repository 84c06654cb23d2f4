import type { Tone } from './Alert';

const STYLES: Record<Tone | 'neutral', string> = {
  ok: 'bg-ok-soft text-ok border-ok/30',
  warn: 'bg-warn-soft text-warn border-warn/30',
  breach: 'bg-breach-soft text-breach border-breach/30',
  info: 'bg-info-soft text-info border-info/30',
  neutral: 'bg-sunken text-ink-soft border-line',
};
const MARKS: Record<Tone | 'neutral', string> = { ok: '●', warn: '▲', breach: '■', info: '◆', neutral: '○' };

/** A status word with a shape mark: readable without colour (shapes differ per tone). */
export function StatusBadge({ tone, children }: { tone: Tone | 'neutral'; children: string }) {
  return (
    <span className={`inline-flex items-center gap-1 rounded-sm border px-1.5 py-px text-xs font-medium ${STYLES[tone]}`}>
      <span aria-hidden className="text-[0.7em]">
        {MARKS[tone]}
      </span>
      {children}
    </span>
  );
}
