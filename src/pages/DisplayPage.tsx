import { useParams } from "react-router-dom";
import { useSociety } from "../api/accounts";
import { ApiError } from "../api/http";
import { useConnection, useDisplay, useLiveState, usePulses } from "../api/live";
import { Mimic } from "../components/mimic/Mimic";
import { MimicLegend } from "../components/mimic/MimicLegend";
import { useLiveLayout } from "../hooks/useLiveLayout";
import { useNow } from "../hooks/useNow";

/**
 * The visitor display behind a display link: the layout's name, a clock and a large mimic.
 * Read-only by design (CONTRACT.md §7): no buttons, no form controls, no names of people.
 * It reconnects by itself; while it is away from the server it says so in words.
 */
export default function DisplayPage() {
  const { token = "" } = useParams();
  const display = useDisplay(token);
  const slug = display.data?.slug;
  const live = useLiveState(slug, token);
  useLiveLayout(slug, { displayToken: token });
  const connection = useConnection(slug ?? "");
  const pulses = usePulses(slug ?? "");
  const now = useNow();
  const society = useSociety();

  const refused = connection.status === "refused";
  if (display.isError || refused) {
    const gone = refused || (display.error instanceof ApiError && (display.error.status === 404 || display.error.status === 403 || display.error.status === 410));
    return (
      <main className="flex min-h-screen items-center justify-center p-8 text-center">
        <div>
          <h1 className="text-4xl font-bold">Blocklight</h1>
          <p className="mt-4 text-2xl text-ink-soft" data-display-gone={gone ? "true" : undefined}>
            {gone ? "This display link is no longer in use." : "Cannot reach the layout just now. Trying again…"}
          </p>
        </div>
      </main>
    );
  }

  const stale = connection.status !== "live" && connection.status !== "connecting";
  return (
    <main className="flex min-h-screen flex-col bg-panel-950 px-[3vw] py-[2vh]" data-display="true">
      <header className="flex items-baseline justify-between gap-6">
        <div>
          <h1 className="text-[clamp(1.5rem,3.2vw,3.5rem)] font-bold leading-tight">{display.data?.name ?? "Blocklight"}</h1>
          {society.data ? <p className="text-[clamp(0.9rem,1.5vw,1.6rem)] text-ink-soft" data-society="true">{society.data}</p> : null}
        </div>
        <p className="font-mono text-[clamp(1.5rem,3.2vw,3.5rem)] font-bold tabular-nums text-ink-soft" aria-label="Time now">
          {new Date(now).toLocaleTimeString("en-GB", { hour: "2-digit", minute: "2-digit", second: "2-digit" })}
        </p>
      </header>
      <div className="flex flex-1 items-center">
        {display.data && live.data ? (
          <Mimic title={display.data.name} layout={display.data} routes={display.data.routes} state={live.data} pulses={pulses} size="display" />
        ) : (
          <p role="status" className="w-full text-center text-2xl text-ink-faint">
            Connecting to the layout…
          </p>
        )}
      </div>
      <footer className="flex flex-wrap items-center justify-between gap-4 text-[clamp(0.9rem,1.3vw,1.4rem)] text-ink-faint">
        <p role="status" data-connection={connection.status} className={stale ? "font-semibold text-aspect-caution" : ""}>
          {stale ? "Reconnecting — the picture may be out of date" : live.data?.faulted ? "All signals at danger" : "Live"}
        </p>
        <MimicLegend />
        <p>Blocklight — an operating aid; the society's rules apply</p>
      </footer>
    </main>
  );
}
