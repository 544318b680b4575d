import { redirect } from "react-router";
import type { Route } from "./+types/logout";
import { clearSessionCookie, revokeSession } from "~/services/session.server";

export async function action({ request }: Route.ActionArgs) {
  await revokeSession(request);
  throw redirect("/login", { headers: { "Set-Cookie": clearSessionCookie(request) } });
}

export async function loader() {
  throw redirect("/");
}
