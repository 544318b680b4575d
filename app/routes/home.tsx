import { redirect } from "react-router";
import type { Route } from "./+types/home";
import { getPrincipal } from "~/services/session.server";
import { listSitesFor } from "~/models/sites.server";
import { homePath } from "~/permissions";

export async function loader({ request }: Route.LoaderArgs) {
  const principal = await getPrincipal(request);
  if (!principal) throw redirect("/login");
  const sites = await listSitesFor(principal);
  throw redirect(homePath(principal.roles, sites[0]?.id ?? null));
}

export default function Home() {
  return null;
}
