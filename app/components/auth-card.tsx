import type { ReactNode } from "react";
import { Logo } from "./logo";

export function AuthCard({ title, children }: { title: string; children: ReactNode }) {
  return (
    <main className="flex min-h-screen items-center justify-center p-6">
      <div className="w-full max-w-sm">
        <div className="mb-6 flex items-center gap-3">
          <Logo className="h-10 w-10" />
          <p className="text-2xl font-semibold">Sunsift</p>
        </div>
        <div className="panel space-y-4">
          <h1 className="h2">{title}</h1>
          {children}
        </div>
      </div>
    </main>
  );
}
