import { Link } from "react-router";
import type { Route } from "./+types/site-fly-list";
import { requireSite } from "~/services/session.server";
import { EmptyState } from "~/components/empty-state";
import { FlightCautions } from "~/components/flight-cautions";
import { FlightTimeline, type TimelineDayView } from "~/components/flight-timeline";
import { useQuery } from "@tanstack/react-query";
import { flyList } from "~/models/fly-list.server";
import { CLEAR_SKY_MODEL } from "~/domain/flight-timeline";
import { compactNumbers } from "~/domain/cross-reference";
import { can } from "~/permissions";
import { cached } from "~/services/change-feed.server";

export const meta: Route.MetaFunction = () => [{ title: "Fly list · Sunsift" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site, principal } = await requireSite(request, params.siteId, "flylist:view");
  // Cached until flags, findings or work orders change (see change-feed.server.ts); the flight
  // windows come separately from flight-windows.json.
  const list = await cached(`fly-list:${site.id}:${site.updatedAt.getTime()}`, () => flyList(site));
  const m = site.settings.mounting;
  return {
    site: { id: site.id, name: site.name, timezone: site.timezone },
    list,
    model: CLEAR_SKY_MODEL,
    mounting: m.kind === "fixed" ? `fixed tilt ${m.tilt}°, azimuth ${m.azimuth}°` : `single-axis tracker, axis ${m.axisAzimuth}°, ±${m.maxAngle}°, GCR ${m.gcr}, backtracking`,
    thresholds: site.settings.thresholds,
    canLog: can(principal.roles, "flights:log"),
  };
}

const kwh = (x: number) => (x >= 100 ? Math.round(x).toLocaleString("en") : x.toFixed(1));

export default function FlyList({ loaderData }: Route.ComponentProps) {
  const { site, list, model, mounting, thresholds, canLog } = loaderData;
  const windows = useQuery({
    queryKey: ["flight-windows", site.id],
    queryFn: async ({ signal }) => {
      const res = await fetch(`/sites/${site.id}/flight-windows.json`, { signal });
      if (!res.ok) throw new Error(`The flight windows could not be loaded (${res.status}).`);
      return ((await res.json()) as { days: TimelineDayView[] }).days;
    },
    staleTime: 5 * 60_000,
  });
  return (
    <div className="space-y-6 text-lg">
      <div className="flex flex-wrap items-center gap-3">
        <h1 className="text-3xl font-bold text-ink">Fly list <span className="font-semibold text-muted">· {site.name}</span></h1>
        <div className="ml-auto flex gap-2">
          <Link className="btn-secondary" to={`/sites/${site.id}/fly-list/brief`} target="_blank" rel="noreferrer">Flight brief (print)</Link>
          {canLog ? <Link className="btn" to={`/sites/${site.id}/flights`}>Log a flight</Link> : null}
        </div>
      </div>

      {list.blocks.length === 0 ? (
        <EmptyState title="Nothing to fly">Every open flag is explained by a finding, or there are no flags yet. Blocks with losses no finding explains are ranked here, worst first.</EmptyState>
      ) : (
        <>
          <p className="text-xl" data-testid="fly-total">
            <strong>{kwh(list.totalUnexplainedKwhPerDay)} kWh/day</strong> of loss no finding explains, in {list.blocks.length} block{list.blocks.length === 1 ? "" : "s"}.
          </p>
          <ol className="space-y-4" data-testid="fly-list">
            {list.blocks.map((b) => (
              <li key={b.block} className="rounded-lg border-2 border-ink bg-white p-5">
                <div className="flex flex-wrap items-baseline gap-x-4">
                  <span className="text-4xl font-bold">{b.rank}.</span>
                  <span className="text-3xl font-bold">Block {b.block}</span>
                  <span className="text-2xl font-semibold text-bad">{kwh(b.unexplainedKwhPerDay)} kWh/day</span>
                  <span className="text-xl">{b.flags} flag{b.flags === 1 ? "" : "s"} need{b.flags === 1 ? "s" : ""} a flight</span>
                  <span className="text-base text-muted">{b.lastFlown ? `last flown ${b.lastFlown}` : "never flown"}</span>
                </div>
                <table className="mt-3 w-full text-left text-lg">
                  <thead><tr className="border-b-2 border-ink"><th className="py-1 pr-4">Combiner</th><th className="pr-4">Strings out</th><th className="pr-4">Unexplained</th><th>Strings to look at</th></tr></thead>
                  <tbody>
                    {b.combiners.map((c) => (
                      <tr key={c.flagId} className="border-b border-line align-top">
                        <td className="py-2 pr-4 font-bold">{c.combiner}</td>
                        <td className="pr-4">{c.stringsOut} of {c.stringCount ?? "?"}</td>
                        <td className="pr-4">{kwh(c.unexplainedKwhPerDay)} kWh/day{c.explainedFraction > 0 ? <span className="block text-base text-muted">{Math.round(c.explainedFraction * 100)} % explained so far</span> : null}</td>
                        <td>
                          {c.narrowed ? <strong>strings {compactNumbers(c.strings)} first</strong> : <>strings {compactNumbers(c.strings)}</>}
                          {c.area ? <span className="block text-base text-muted">x {Math.round(c.area.xMin)}–{Math.round(c.area.xMax)} m, y {Math.round(c.area.yMin)}–{Math.round(c.area.yMax)} m</span> : null}
                        </td>
                      </tr>
                    ))}
                  </tbody>
                </table>
              </li>
            ))}
          </ol>
        </>
      )}

      <section className="panel space-y-3" aria-labelledby="windows">
        <h2 className="text-2xl font-bold" id="windows">Flight windows, next 7 days</h2>
        <p className="text-base">
          At {site.name} ({mounting}), in 15-minute steps, site time ({site.timezone}). A window is where the clear-sky POA reaches the IR minimum of{" "}
          <strong>{thresholds.irMinPoa} W/m²</strong> with the sun at least 15° high. Cooler morning hours show cell-level defects best; whole-string faults show at any time.
          Clouds and wind on the day decide: measure POA before take-off.
        </p>
        {windows.data ? (
          <FlightTimeline days={windows.data} minPoa={thresholds.irMinPoa} />
        ) : windows.isError ? (
          <p className="text-bad" role="alert">{windows.error.message} Reload the page to try again.</p>
        ) : (
          <p className="text-muted" role="status">Computing the flight windows…</p>
        )}
        <details className="text-base">
          <summary className="cursor-pointer font-semibold">How the windows are computed</summary>
          <div className="mt-2 space-y-1" data-testid="clear-sky-model">
            <p>Clear-sky model: <strong>{model.name}</strong>.</p>
            <p>{model.formula} (coefficients a = {model.coefficients.a} W/m², b = {model.coefficients.b}); ground albedo {model.coefficients.albedo}.</p>
            <p>Glare: the angle between the camera's line of sight (pitched 70° below the horizon) and the sun's mirror reflection off the module plane; headings with less than 15° are listed to avoid. Best heading: the glare-free one looking nearest the module normal.</p>
            <ul className="list-disc pl-5 text-sm text-muted">{model.sources.map((s) => <li key={s}>{s}</li>)}</ul>
          </div>
        </details>
      </section>
      <FlightCautions />
    </div>
  );
}
