import { Form, NavLink, Outlet, useLoaderData, useParams } from "react-router";
import type { Route } from "./+types/app-layout";
import { Logo } from "~/components/logo";
import { organisationsOf, requireUser } from "~/services/session.server";
import { env } from "~/env.server";
import { listSitesFor } from "~/models/sites.server";
import { can, ROLE_LABELS, SITE_SCREENS } from "~/permissions";
import { cached } from "~/services/change-feed.server";

export async function loader({ request }: Route.LoaderArgs) {
  const principal = await requireUser(request);
  const [sites, orgs] = await Promise.all([
    cached(`site-list:${principal.orgId}:${principal.userId}:${principal.roles.join(",")}`, () => listSitesFor(principal)),
    organisationsOf(principal.userId),
  ]);
  return {
    user: { name: principal.name, email: principal.email, roles: principal.roles },
    sites: sites.map((s) => ({ id: s.id, name: s.name })),
    /** The organisation this session works in, when the person belongs to several (to switch). */
    org: orgs.length > 1 ? { name: orgs.find((o) => o.id === principal.orgId)?.name ?? "", others: orgs.length - 1 } : null,
    /** The demo (SUNSIFT_DEMO=1): its outbox tab shows in Settings. */
    demo: env().SUNSIFT_DEMO === "1",
  };
}

export function useAppUser() {
  return useLoaderData<typeof loader>();
}

function navClass({ isActive }: { isActive: boolean }) {
  return `rounded-md px-3 py-2 text-sm font-medium ${isActive ? "bg-brand text-white" : "text-ink hover:bg-paper"}`;
}

export default function AppLayout({ loaderData }: Route.ComponentProps) {
  const { user, sites, org } = loaderData;
  const params = useParams();
  const siteId = params.siteId ?? sites[0]?.id;
  const site = sites.find((s) => s.id === siteId);
  return (
    <div className="min-h-screen">
      <header className="border-b border-line bg-panel">
        <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-4 px-4 py-3">
          <NavLink to="/" className="flex items-center gap-2" aria-label="Sunsift home">
            <Logo />
            <span className="text-xl font-semibold">Sunsift</span>
          </NavLink>
          {site ? <span className="rounded bg-paper px-2 py-1 text-sm text-muted" data-testid="current-site">{site.name}</span> : null}
          <div className="ml-auto flex items-center gap-3 text-sm">
            <span className="hidden text-right sm:block">
              <span className="block font-medium">{user.name}</span>
              <span className="block text-muted" data-testid="user-roles">{user.roles.map((r) => ROLE_LABELS[r]).join(" · ")}</span>
            </span>
            {org ? (
              <NavLink to="/organisations" className="text-brand underline" data-testid="switch-org" title="Switch organisation">
                {org.name} · switch organisation
              </NavLink>
            ) : null}
            <NavLink to="/settings/notifications" className="text-brand underline">My e-mails</NavLink>
            <Form method="post" action="/logout">
              <button className="btn-secondary" type="submit">Sign out</button>
            </Form>
          </div>
        </div>
        <nav className="mx-auto flex max-w-7xl flex-wrap gap-1 px-4 pb-2" aria-label="Main">
          <NavLink to="/portfolio" className={navClass}>Portfolio</NavLink>
          {siteId
            ? SITE_SCREENS.filter((s) => can(user.roles, s.permission)).map((s) => (
                <NavLink key={s.key} to={`/sites/${siteId}${s.path}`} end={s.path === ""} className={navClass}>
                  {s.label}
                </NavLink>
              ))
            : null}
          {can(user.roles, "settings:users") ? <NavLink to="/settings" className={navClass}>Settings</NavLink> : null}
        </nav>
      </header>
      <main className="mx-auto max-w-7xl px-4 py-6">
        <Outlet />
      </main>
    </div>
  );
}
