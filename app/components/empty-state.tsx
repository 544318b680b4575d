import type { ReactNode } from "react";

export function EmptyState({ title, children }: { title: string; children?: ReactNode }) {
  return (
    <div className="rounded-lg border-2 border-dashed border-line bg-panel p-10 text-center">
      <p className="text-lg font-semibold text-ink">{title}</p>
      {children ? <div className="mx-auto mt-2 max-w-prose text-muted">{children}</div> : null}
    </div>
  );
}
