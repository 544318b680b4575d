import { Link, useSearchParams } from "react-router";
import type { Route } from "./+types/site-work-orders";
import { requireSite } from "~/services/session.server";
import { listWorkOrders, workOrderCounts, type WorkOrderListItem } from "~/models/work-orders.server";
import { WORK_ORDER_STATES, type WorkOrderState } from "~/db/schema";
import { dueStatus, formatNumber, localDay } from "~/domain/work-orders";
import { can } from "~/permissions";
import { EmptyState } from "~/components/empty-state";

export const meta: Route.MetaFunction = () => [{ title: "Work orders · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "workorders:view");
  const url = new URL(request.url);
  const manager = can(principal.roles, "workorders:manage");
  // Technicians see their own work; managers the board, or the list, or their own with ?view=mine.
  const view = !manager ? "mine" : url.searchParams.get("view") === "list" ? "list" : url.searchParams.get("view") === "mine" ? "mine" : "board";
  const page = Math.max(1, Number(url.searchParams.get("page")) || 1);
  const today = localDay(new Date(), site.timezone);
  let items: WorkOrderListItem[] = [];
  let total = 0;
  let pageSize = 50;
  let recentDone: WorkOrderListItem[] = [];
  if (view === "mine") {
    items = (await listWorkOrders(site.id, { assigneeId: principal.userId, states: ["assigned", "in progress", "open"], pageSize: 100 })).items;
    recentDone = (await listWorkOrders(site.id, { assigneeId: principal.userId, states: ["done"], pageSize: 5 })).items;
  } else if (view === "board") {
    items = (await listWorkOrders(site.id, { states: ["open", "assigned", "in progress"], pageSize: 200 })).items;
    recentDone = (await listWorkOrders(site.id, { states: ["done"], pageSize: 10 })).items;
  } else {
    const state = url.searchParams.get("state");
    const states = (WORK_ORDER_STATES as readonly string[]).includes(state ?? "") ? [state as WorkOrderState] : undefined;
    const r = await listWorkOrders(site.id, { states, page, pageSize: 50 });
    items = r.items;
    total = r.total;
    pageSize = r.pageSize;
  }
  return {
    site: { id: site.id, name: site.name },
    view,
    manager,
    today,
    counts: await workOrderCounts(site.id),
    items,
    recentDone,
    total,
    page,
    pageSize,
  };
}

type Item = Route.ComponentProps["loaderData"]["items"][number];

const PRIORITY_STYLE: Record<string, string> = {
  urgent: "bg-bad text-white",
  high: "bg-warn text-white",
  normal: "bg-paper text-ink border border-line",
  low: "bg-paper text-muted border border-line",
};

function Due({ item, today }: { item: Item; today: string }) {
  const s = dueStatus(item.dueOn, today, item.state);
  if (!item.dueOn) return <span className="text-muted">no due date</span>;
  if (s === "overdue") return <span className="font-semibold text-bad">overdue · was due {item.dueOn}</span>;
  if (s === "due soon") return <span className="font-semibold text-warn">due {item.dueOn}</span>;
  return <span>due {item.dueOn}</span>;
}

function where(i: Item) {
  if (i.combiner) return `${i.combiner}${i.strings.length ? ` / string ${i.strings.join(", ")}` : ""}`;
  return i.block ? `Block ${i.block}` : "Site";
}

function Card({ item, siteId, today, big = false }: { item: Item; siteId: string; today: string; big?: boolean }) {
  return (
    <Link
      to={`/sites/${siteId}/work-orders/${item.id}`}
      className={`block rounded-lg border border-line bg-panel hover:border-brand ${big ? "p-4" : "p-3"}`}
      data-testid="work-order-card"
    >
      <div className="flex items-start justify-between gap-2">
        <span className="text-sm font-medium text-muted">{formatNumber(item.number)}</span>
        <span className={`rounded px-2 py-0.5 text-xs font-medium ${PRIORITY_STYLE[item.priority]}`}>{item.priority}</span>
      </div>
      <p className={`mt-1 font-semibold ${big ? "text-lg" : ""}`}>{item.title}</p>
      <p className="text-sm">{where(item)}</p>
      <p className="mt-1 text-sm">
        <Due item={item} today={today} />
        {item.assignee ? <span className="text-muted"> · {item.assignee}</span> : null}
      </p>
    </Link>
  );
}

function Tabs({ view }: { view: string }) {
  const tab = (v: string, label: string) => (
    <Link to={v === "board" ? "?" : `?view=${v}`} className={`-mb-px border-b-2 px-3 py-2 text-sm font-medium ${view === v ? "border-brand text-brand" : "border-transparent text-muted"}`} aria-current={view === v ? "page" : undefined}>
      {label}
    </Link>
  );
  return (
    <div className="flex gap-2 border-b border-line">
      {tab("board", "Board")}
      {tab("list", "List")}
      {tab("mine", "My work")}
    </div>
  );
}

export default function Screen({ loaderData }: Route.ComponentProps) {
  const { site, view, manager, today, counts, items, recentDone } = loaderData;
  const [params] = useSearchParams();
  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <h1 className="h1">{view === "mine" ? "My work" : "Work orders"} <span className="text-muted">· {site.name}</span></h1>
        {manager ? <Link className="btn" to={`/sites/${site.id}/work-orders/new`}>New work order</Link> : null}
      </div>
      {manager ? <Tabs view={view} /> : null}

      {view === "mine" ? (
        <div className="max-w-xl space-y-3">
          {items.length === 0 ? (
            <EmptyState title="Nothing assigned to you">When an O&M lead assigns you a work order it appears here, and you get an e-mail.</EmptyState>
          ) : (
            items.map((i) => <Card key={i.id} item={i} siteId={site.id} today={today} big />)
          )}
          <p className="text-sm text-muted">
            <Link className="text-brand underline" to="/settings/notifications">Choose which e-mails you get</Link>
          </p>
          {recentDone.length ? (
            <details className="panel">
              <summary className="cursor-pointer font-medium">Recently done ({recentDone.length})</summary>
              <ul className="mt-2 space-y-1 text-sm">
                {recentDone.map((i) => (
                  <li key={i.id}><Link className="text-brand underline" to={`/sites/${site.id}/work-orders/${i.id}`}>{formatNumber(i.number)} {i.title}</Link> — {i.resolution}</li>
                ))}
              </ul>
            </details>
          ) : null}
        </div>
      ) : view === "board" ? (
        counts.open + counts.assigned + counts["in progress"] + counts.done + counts.cancelled === 0 ? (
          <EmptyState title="No work orders yet">
            Create one from a flag (<Link className="text-brand underline" to={`/sites/${site.id}/flags`}>Flags</Link> → “Create work order” on the flag’s row), from a drone finding (<Link className="text-brand underline" to={`/sites/${site.id}/flights`}>Flights</Link> → a flight → “Create work order” beside the finding), or by hand with <Link className="text-brand underline" to={`/sites/${site.id}/work-orders/new`}>New work order</Link>.
          </EmptyState>
        ) : (
          <div className="grid gap-4 md:grid-cols-2 xl:grid-cols-4" data-testid="board">
            {(["open", "assigned", "in progress"] as const).map((s) => (
              <section key={s} aria-label={s} className="space-y-2">
                <h2 className="h2 capitalize">{s} <span className="text-muted">({counts[s]})</span></h2>
                {items.filter((i) => i.state === s).map((i) => <Card key={i.id} item={i} siteId={site.id} today={today} />)}
                {counts[s] === 0 ? <p className="text-sm text-muted">None.</p> : null}
              </section>
            ))}
            <section aria-label="done" className="space-y-2">
              <h2 className="h2">Done <span className="text-muted">({counts.done})</span></h2>
              {recentDone.map((i) => <Card key={i.id} item={i} siteId={site.id} today={today} />)}
              {counts.done > recentDone.length ? <Link className="text-sm text-brand underline" to="?view=list&state=done">All done work orders</Link> : null}
              {counts.cancelled ? <Link className="block text-sm text-muted underline" to="?view=list&state=cancelled">{counts.cancelled} cancelled</Link> : null}
            </section>
          </div>
        )
      ) : (
        <div className="space-y-3">
          <div className="flex flex-wrap gap-2 text-sm" role="group" aria-label="Filter by state">
            <Link to="?view=list" className={!params.get("state") ? "font-semibold text-brand" : "text-muted underline"}>All</Link>
            {WORK_ORDER_STATES.map((s) => (
              <Link key={s} to={`?view=list&state=${encodeURIComponent(s)}`} className={params.get("state") === s ? "font-semibold text-brand" : "text-muted underline"}>{s} ({counts[s]})</Link>
            ))}
          </div>
          {items.length === 0 ? <EmptyState title="No work orders in this state" /> : (
            <div className="panel overflow-x-auto p-0">
              <table className="table">
                <thead>
                  <tr><th>No.</th><th>Title</th><th>Where</th><th>State</th><th>Priority</th><th>Due</th><th>Assignee</th><th>Found</th></tr>
                </thead>
                <tbody>
                  {items.map((i) => (
                    <tr key={i.id}>
                      <td><Link className="text-brand underline" to={`/sites/${site.id}/work-orders/${i.id}`}>{formatNumber(i.number)}</Link></td>
                      <td>{i.title}</td>
                      <td>{where(i)}</td>
                      <td>{i.state}</td>
                      <td>{i.priority}</td>
                      <td><Due item={i} today={today} /></td>
                      <td>{i.assignee ?? <span className="text-muted">—</span>}</td>
                      <td>{i.resolution ?? ""}</td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          )}
          <div className="flex items-center gap-3 text-sm">
            {loaderData.page > 1 ? <Link className="btn-secondary" to={`?view=list${params.get("state") ? `&state=${params.get("state")}` : ""}&page=${loaderData.page - 1}`}>Previous</Link> : null}
            <span className="text-muted">Page {loaderData.page} of {Math.max(1, Math.ceil(loaderData.total / loaderData.pageSize))} · {loaderData.total} work orders</span>
            {loaderData.page * loaderData.pageSize < loaderData.total ? <Link className="btn-secondary" to={`?view=list${params.get("state") ? `&state=${params.get("state")}` : ""}&page=${loaderData.page + 1}`}>Next</Link> : null}
          </div>
        </div>
      )}
    </div>
  );
}
