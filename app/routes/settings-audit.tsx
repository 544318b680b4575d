import { Link, useSearchParams } from "react-router";
import { and, desc, eq, type SQL } from "drizzle-orm";
import type { Route } from "./+types/settings-audit";
import { requirePermission } from "~/services/session.server";
import { db } from "~/db/client.server";
import { auditEvents, users } from "~/db/schema";
import { SettingsTabs } from "~/components/settings-tabs";
import { EmptyState } from "~/components/empty-state";

export const meta: Route.MetaFunction = () => [{ title: "Audit trail · Settings · Sunsift" }];

const PAGE = 50;
const ENTITIES = [
  { value: "", label: "Everything" },
  { value: "flag", label: "Flag states" },
  { value: "work_order", label: "Work orders" },
  { value: "site", label: "Sites and settings" },
  { value: "user", label: "Users and roles" },
  { value: "inspection", label: "Inspections" },
];

export async function loader({ request }: Route.LoaderArgs) {
  const principal = await requirePermission(request, "audit:view");
  const url = new URL(request.url);
  const page = Math.max(1, Number(url.searchParams.get("page")) || 1);
  const entity = url.searchParams.get("entity") ?? "";
  const conds: SQL[] = [eq(auditEvents.orgId, principal.orgId)];
  if (ENTITIES.some((e) => e.value && e.value === entity)) conds.push(eq(auditEvents.entity, entity));
  const rows = await db()
    .select({ id: auditEvents.id, at: auditEvents.at, action: auditEvents.action, entity: auditEvents.entity, entityId: auditEvents.entityId, detail: auditEvents.detail, who: users.name })
    .from(auditEvents)
    .leftJoin(users, eq(users.id, auditEvents.userId))
    .where(and(...conds))
    .orderBy(desc(auditEvents.at), desc(auditEvents.id))
    .limit(PAGE + 1)
    .offset((page - 1) * PAGE);
  return { page, entity, hasMore: rows.length > PAGE, events: rows.slice(0, PAGE) };
}

function describe(detail: Record<string, unknown> | null): string {
  if (!detail) return "";
  return Object.entries(detail)
    .filter(([, v]) => v != null && v !== "")
    .map(([k, v]) => `${k}: ${typeof v === "object" ? JSON.stringify(v) : String(v)}`)
    .join(" · ")
    .slice(0, 300);
}

export default function Screen({ loaderData }: Route.ComponentProps) {
  const [params] = useSearchParams();
  const link = (page: number) => `?${new URLSearchParams({ ...(params.get("entity") ? { entity: params.get("entity")! } : {}), page: String(page) })}`;
  return (
    <div className="space-y-6">
      <h1 className="h1">Settings</h1>
      <SettingsTabs />
      <div className="flex flex-wrap items-center gap-2 text-sm" role="group" aria-label="Show">
        {ENTITIES.map((e) => (
          <Link key={e.value} to={e.value ? `?entity=${e.value}` : "?"} className={loaderData.entity === e.value ? "rounded bg-brand px-2 py-1 font-medium text-white" : "rounded px-2 py-1 text-ink underline"}>{e.label}</Link>
        ))}
      </div>
      {loaderData.events.length === 0 ? <EmptyState title="Nothing recorded yet">Changes to flags, work orders, settings and users appear here.</EmptyState> : (
        <div className="panel overflow-x-auto p-0">
          <table className="table">
            <thead><tr><th>When (UTC)</th><th>Who</th><th>What</th><th>Details</th></tr></thead>
            <tbody>
              {loaderData.events.map((e) => (
                <tr key={e.id} data-testid="audit-row">
                  <td className="whitespace-nowrap">{new Date(e.at).toISOString().slice(0, 16).replace("T", " ")}</td>
                  <td>{e.who ?? <span className="text-muted">Sunsift</span>}</td>
                  <td>{e.action}</td>
                  <td className="text-muted">{describe(e.detail)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
      <div className="flex gap-3">
        {loaderData.page > 1 ? <Link className="btn-secondary" to={link(loaderData.page - 1)}>Newer</Link> : null}
        {loaderData.hasMore ? <Link className="btn-secondary" to={link(loaderData.page + 1)}>Older</Link> : null}
      </div>
    </div>
  );
}
