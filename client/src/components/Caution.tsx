/** The standard caution beside any figure that could steer a financial decision. Reuse it on every risk page. */
export const CAUTION_TEXT =
  'These figures are model estimates, not guarantees. They assume normally distributed returns and scale risk with the square root of time over the stated estimation window. Past volatility may not predict future volatility. The firm’s risk policy governs every decision.';

/** `text` replaces the standard wording where it does not fit (figures that are history, not model estimates). */
export function Caution({ extra, compact = false, text = CAUTION_TEXT }: { extra?: string; compact?: boolean; text?: string }) {
  return (
    <aside aria-label="Caution" className={`rounded-md border border-line bg-sunken text-ink-soft ${compact ? 'px-3 py-1.5 text-xs' : 'px-3.5 py-2.5 text-xs leading-relaxed'}`}>
      <span className="mr-1 font-semibold text-ink">Caution.</span>
      {text}
      {extra ? <> {extra}</> : null}
    </aside>
  );
}
