import { Link } from "react-router";
import type { Route } from "./+types/site-fly-list.brief";
import { requireSite } from "~/services/session.server";
import { flyList, siteFlightWindows } from "~/models/fly-list.server";
import { CLEAR_SKY_MODEL } from "~/domain/flight-timeline";
import { CONDITIONS_CHECKLIST, DRONE_CAUTIONS } from "~/domain/flight-conditions";
import { timelineView } from "~/components/flight-timeline";
import { compactNumbers } from "~/domain/cross-reference";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Flight brief · ${data?.site.name ?? ""} · Sunsift` }];

/** A printable page: blocks in order, flight windows, the conditions checklist and the cautions. */
export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireSite(request, params.siteId, "flylist:view");
  const list = await flyList(site);
  const days = timelineView(siteFlightWindows(site, { days: 7 }));
  const t = site.settings.thresholds;
  return {
    site: { id: site.id, name: site.name, timezone: site.timezone, lat: site.latitude, lon: site.longitude },
    list,
    days: days.map((d) => ({ day: d.day, label: d.label, windows: d.windows, peakPoa: d.peakPoa, solarNoonLocal: d.solarNoonLocal, glareAtNoon: d.rows.find((r) => r.local === d.solarNoonLocal)?.glare ?? [] })),
    checklist: CONDITIONS_CHECKLIST(t),
    cautions: DRONE_CAUTIONS,
    model: CLEAR_SKY_MODEL.name,
    printed: new Date().toISOString().slice(0, 16).replace("T", " "),
  };
}

export default function Brief({ loaderData }: Route.ComponentProps) {
  const { site, list, days, checklist, cautions, model, printed } = loaderData;
  return (
    <main className="mx-auto max-w-4xl space-y-6 bg-white p-8 text-lg text-black print:p-0">
      <div className="flex items-baseline gap-3 print:hidden">
        <Link to={`/sites/${site.id}/fly-list`} className="text-brand underline">← Back to the fly list</Link>
        <button type="button" className="btn ml-auto" onClick={() => window.print()}>Print</button>
      </div>
      <header>
        <h1 className="text-3xl font-bold">Flight brief — {site.name}</h1>
        <p>{site.lat.toFixed(3)}°, {site.lon.toFixed(3)}° · times in {site.timezone} · prepared {printed} UTC</p>
      </header>
      <section>
        <h2 className="border-b-2 border-black text-2xl font-bold">1. Blocks, in order</h2>
        {list.blocks.length === 0 ? (
          <p className="mt-2">No block needs a flight: every open flag is explained.</p>
        ) : (
          <ol className="mt-2 space-y-3" data-testid="brief-blocks">
            {list.blocks.map((b) => (
              <li key={b.block} className="break-inside-avoid">
                <p className="text-xl font-bold">{b.rank}. Block {b.block} — {b.unexplainedKwhPerDay.toFixed(1)} kWh/day unexplained, {b.flags} flag{b.flags === 1 ? "" : "s"}</p>
                <ul className="ml-6 list-disc">
                  {b.combiners.map((c) => (
                    <li key={c.flagId}>
                      <strong>{c.combiner}</strong>: {c.stringsOut} of {c.stringCount ?? "?"} strings out; {c.narrowed ? "look first at strings " : "strings "}{compactNumbers(c.strings)}
                      {c.area ? ` (x ${Math.round(c.area.xMin)}–${Math.round(c.area.xMax)} m, y ${Math.round(c.area.yMin)}–${Math.round(c.area.yMax)} m)` : ""}
                    </li>
                  ))}
                </ul>
              </li>
            ))}
          </ol>
        )}
      </section>
      <section className="break-inside-avoid">
        <h2 className="border-b-2 border-black text-2xl font-bold">2. Flight windows (clear sky)</h2>
        <table className="mt-2 w-full text-left">
          <thead><tr className="border-b border-black"><th>Day</th><th>Windows (IR minimum met)</th><th>Solar noon</th><th>Headings to avoid at noon</th></tr></thead>
          <tbody>
            {days.map((d) => (
              <tr key={d.day} className="border-b border-gray-400 align-top">
                <td className="py-1 pr-3 font-semibold">{d.label}</td>
                <td className="pr-3">{d.windows.length ? d.windows.map((w) => `${w.start}–${w.end}${w.morning ? " (morning, cell-level)" : ""}`).join("; ") : `none (clear-sky POA peaks at ${Math.round(d.peakPoa)} W/m²)`}</td>
                <td className="pr-3">{d.solarNoonLocal ?? "—"}</td>
                <td>{d.glareAtNoon.join(", ") || "none"}</td>
              </tr>
            ))}
          </tbody>
        </table>
        <p className="mt-1 text-sm">Model: {model}. Clouds and wind on the day decide.</p>
      </section>
      <section className="break-inside-avoid">
        <h2 className="border-b-2 border-black text-2xl font-bold">3. Conditions checklist</h2>
        <ul className="mt-2 space-y-1">{checklist.map((c) => <li key={c}>☐ {c}</li>)}</ul>
      </section>
      <section className="break-inside-avoid">
        <h2 className="border-b-2 border-black text-2xl font-bold">4. Cautions</h2>
        <ul className="mt-2 list-disc space-y-1 pl-6">{cautions.map((c) => <li key={c}>{c}</li>)}</ul>
      </section>
    </main>
  );
}
