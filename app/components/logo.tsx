/** Sunsift's mark: a sun setting behind three rows of modules, the rows doing the sifting. */
export function Logo({ className = "h-8 w-8" }: { className?: string }) {
  return (
    <svg viewBox="0 0 32 32" className={className} aria-hidden="true">
      <circle cx="16" cy="14" r="8" fill="#e0a100" />
      <rect x="3" y="16" width="26" height="3" rx="1" fill="#0f5c5a" />
      <rect x="5" y="21" width="22" height="3" rx="1" fill="#0f5c5a" />
      <rect x="7" y="26" width="18" height="3" rx="1" fill="#0f5c5a" />
    </svg>
  );
}
