/** Loadline's wordmark: three load lines of falling length (a stylised variance split) beside the name. */
export function Wordmark({ className = '', tone = 'dark' }: { className?: string; tone?: 'dark' | 'light' }) {
  const ink = tone === 'dark' ? 'text-ink' : 'text-white';
  return (
    <span className={`inline-flex items-center gap-2 ${className}`}>
      <svg viewBox="0 0 20 20" width="20" height="20" aria-hidden className="shrink-0">
        <rect x="2" y="3" width="16" height="3" rx="1.5" fill="#0e5c61" />
        <rect x="2" y="8.5" width="11" height="3" rx="1.5" fill="#0e5c61" opacity="0.7" />
        <rect x="2" y="14" width="6" height="3" rx="1.5" fill="#0e5c61" opacity="0.45" />
      </svg>
      <span className={`text-[15px] font-semibold tracking-tight ${ink}`}>Loadline</span>
    </span>
  );
}
