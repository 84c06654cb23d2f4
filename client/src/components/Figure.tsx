/**
 * A number as the console shows it: mono, tabular, right-aligned when in columns, with its unit beside it.
 * `value` null or NaN renders an em dash, so a missing figure never reads as zero.
 */
export function Figure({
  value,
  unit,
  digits = 2,
  label,
  size = 'md',
  signed = false,
}: {
  value: number | null | undefined;
  unit?: string;
  digits?: number;
  label?: string;
  size?: 'sm' | 'md' | 'lg';
  signed?: boolean;
}) {
  const missing = value === null || value === undefined || Number.isNaN(value);
  const text = missing ? '—' : formatNumber(value, digits, signed);
  const sizes = { sm: 'text-sm', md: 'text-base', lg: 'text-2xl' } as const;
  const figure = (
    <span className={`font-mono tabular-nums ${sizes[size]} text-ink`}>
      {text}
      {unit && !missing ? <span className="ml-0.5 text-[0.8em] text-ink-soft">{unit}</span> : null}
    </span>
  );
  if (!label) return figure;
  return (
    <div className="flex flex-col gap-0.5">
      <span className="text-xs font-medium text-ink-soft">{label}</span>
      {figure}
    </div>
  );
}

export function formatNumber(value: number, digits = 2, signed = false): string {
  const text = value.toLocaleString('en-GB', { minimumFractionDigits: digits, maximumFractionDigits: digits });
  return signed && value > 0 ? `+${text}` : text.replace('-', '−');
}
