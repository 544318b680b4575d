import { isRouteErrorResponse, Link } from "react-router";
import { Logo } from "./logo";

function messageOf(data: unknown): string | null {
  if (typeof data === "string") return data;
  if (data && typeof data === "object" && "message" in data && typeof data.message === "string") return data.message;
  return null;
}

/** The one error page: what happened in plain words, and a way back. */
export function ErrorPage({ error }: { error: unknown }) {
  let status = 500;
  let title = "Something went wrong";
  let detail = "Sunsift hit an unexpected problem. Try again in a moment; if it keeps happening, tell your administrator.";
  if (isRouteErrorResponse(error)) {
    status = error.status;
    const msg = messageOf(error.data);
    if (status === 404) {
      title = "Page not found";
      detail = msg && msg !== "Not found" ? `${msg}. It may have been removed, or it belongs to another organisation.` : "There is nothing at this address, or it belongs to another organisation.";
    } else if (status === 403) {
      title = "Not available for your role";
      detail = `${msg ?? "Your role does not allow this."} Ask an administrator if you need access.`;
    } else if (status === 503) {
      title = "Temporarily unavailable";
      detail = msg ?? "The database is not answering right now. Your data is safe; try again in a moment.";
    } else if (msg) {
      detail = msg;
    }
  }
  return (
    <main className="mx-auto max-w-xl p-8" data-status={status}>
      <div className="flex items-center gap-3">
        <Logo />
        <span className="text-xl font-semibold">Sunsift</span>
      </div>
      <div className="panel mt-6">
        <p className="text-sm font-semibold text-muted">Error {status}</p>
        <h1 className="h1 mt-1">{title}</h1>
        <p className="mt-3 text-ink">{detail}</p>
        <div className="mt-6 flex gap-3">
          <Link to="/" className="btn">Go to my home page</Link>
        </div>
      </div>
    </main>
  );
}
