/**
 * Arcwatch's mark: a trajectory arc rising over a horizon line, with a marker at its apex
 * and a measuring tick, inside a rounded tile. Drawn for this product.
 */
export function LogoMark({ size = 32, title = "Arcwatch" }: { size?: number; title?: string }) {
  return (
    <svg width={size} height={size} viewBox="0 0 32 32" role="img" aria-label={title} className="shrink-0">
      <rect x="1" y="1" width="30" height="30" rx="8" fill="var(--aw-accent)" />
      <path d="M6 24.5 H26" stroke="var(--aw-accent-ink)" strokeWidth="1.6" strokeLinecap="round" opacity="0.55" />
      <path
        d="M7 24.5 C 10 11, 19 7.5, 25 14"
        fill="none"
        stroke="var(--aw-accent-ink)"
        strokeWidth="2.4"
        strokeLinecap="round"
      />
      <circle cx="16" cy="11.2" r="2.4" fill="var(--aw-accent)" stroke="var(--aw-accent-ink)" strokeWidth="1.8" />
      <path d="M16 17 V24.5" stroke="var(--aw-accent-ink)" strokeWidth="1.4" strokeDasharray="1.6 1.8" opacity="0.8" />
    </svg>
  );
}

export function Wordmark() {
  return (
    <span className="flex items-center gap-2.5">
      <LogoMark />
      <span className="text-lg font-semibold tracking-tight">Arcwatch</span>
    </span>
  );
}
