/** The cautions shown on every work order and field view (DC cannot be switched off in daylight). */
export function SafetyBlock({ compact = false }: { compact?: boolean }) {
  return (
    <section className="rounded-lg border-2 border-warn bg-amber-50 p-4 text-ink" aria-labelledby="safety-title" data-testid="safety-block">
      <h2 id="safety-title" className="flex items-center gap-2 font-semibold text-warn">
        <span aria-hidden="true">⚠</span> Safety before you touch anything
      </h2>
      <ul className={`mt-2 list-disc space-y-1 pl-5 ${compact ? "text-sm" : ""}`}>
        <li>Qualified electrical persons only.</li>
        <li>DC stays live while the sun shines: strings and combiners carry up to 1,500 V DC and cannot be switched off in daylight.</li>
        <li>Lock out and tag out before opening a combiner or pulling a fuse; open string connectors only under no load.</li>
        <li>Wear arc-flash PPE rated for the equipment.</li>
        <li>Verify the absence of voltage with a tested meter before touching conductors.</li>
        <li>Follow the site's procedures and the local electrical codes.</li>
      </ul>
      <p className="mt-2 text-sm text-muted">These reminders do not replace training or licensed electrical practice: where they differ, licensed practice and the site's rules win.</p>
    </section>
  );
}
