import { useEffect, useState } from "react";
import { Links, Meta, Outlet, Scripts, ScrollRestoration } from "react-router";
import { QueryClient, QueryClientProvider } from "@tanstack/react-query";
import type { Route } from "./+types/root";
import { ErrorPage } from "./components/error-page";
import { csrfMiddleware, securityHeadersMiddleware } from "./services/csrf.server";
import { databaseUnavailableMiddleware } from "./services/db-health.server";
import { changeFeedMiddleware } from "./services/change-feed.server";
import "./app.css";

export const middleware: Route.MiddlewareFunction[] = [securityHeadersMiddleware, databaseUnavailableMiddleware, csrfMiddleware, changeFeedMiddleware];

export const meta: Route.MetaFunction = () => [{ title: "Sunsift" }];

export const links: Route.LinksFunction = () => [{ rel: "icon", href: "/favicon.svg", type: "image/svg+xml" }];

export function Layout({ children }: { children: React.ReactNode }) {
  return (
    <html lang="en">
      <head>
        <meta charSet="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <Meta />
        <Links />
      </head>
      <body className="min-h-screen">
        {children}
        <ScrollRestoration />
        <Scripts />
      </body>
    </html>
  );
}

export default function App() {
  const [queryClient] = useState(() => new QueryClient({ defaultOptions: { queries: { staleTime: 30_000 } } }));
  useEffect(() => {
    // Browser tests wait for this before clicking.
    document.documentElement.dataset.hydrated = "true";
  }, []);
  return (
    <QueryClientProvider client={queryClient}>
      <Outlet />
    </QueryClientProvider>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  useEffect(() => {
    document.documentElement.dataset.hydrated = "true";
  }, []);
  return <ErrorPage error={error} />;
}
