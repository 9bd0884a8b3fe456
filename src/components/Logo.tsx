/** Pleat's mark: a strip folded into pleats, as a graph is folded onto a few units. */
export function Logo({ className = '' }: { className?: string }) {
  return (
    <span className={`inline-flex items-center gap-2 ${className}`}>
      <svg width="30" height="22" viewBox="0 0 30 22" aria-hidden="true">
        <path d="M3 18 9 4 15 18 21 4 27 18" fill="none" stroke="#ef7d3c" strokeWidth="3.2" strokeLinejoin="round" strokeLinecap="round" />
        <path d="M3 18H27" stroke="currentColor" strokeOpacity=".35" strokeWidth="1.5" strokeLinecap="round" />
      </svg>
      <span className="text-xl font-bold tracking-tight">Pleat</span>
    </span>
  );
}
