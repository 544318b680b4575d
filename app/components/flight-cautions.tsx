import { DRONE_CAUTIONS } from "~/domain/flight-conditions";

/** The usual drone cautions, shown wherever a flight is planned or logged. */
export function FlightCautions({ className = "" }: { className?: string }) {
  return (
    <section className={`panel border-l-4 border-l-sun ${className}`} aria-labelledby="cautions">
      <h2 className="h2" id="cautions">Before you fly</h2>
      <ul className="mt-2 list-disc space-y-1 pl-5">
        {DRONE_CAUTIONS.map((c) => <li key={c}>{c}</li>)}
      </ul>
    </section>
  );
}
