import type { NodeLiveDto } from "@shared/contract/live";
import type { NodeDto } from "@shared/contract/rest";
import { formatDuration } from "../../lib/duration";

/** One chip per controller node: online or offline, and for how long. */
export function NodeStrip({ nodes, live, now }: { nodes: NodeDto[]; live: Record<string, NodeLiveDto>; now: number }) {
  if (nodes.length === 0) return <p className="text-sm text-ink-faint">No controller nodes registered.</p>;
  return (
    <ul aria-label="Controller nodes" className="flex flex-wrap gap-2">
      {nodes.map((node) => {
        const state = live[node.id];
        const online = state?.online ?? false;
        const since = state?.since ? formatDuration(now - Date.parse(state.since)) : null;
        return (
          <li
            key={node.id}
            data-node={node.id}
            data-online={online ? "true" : "false"}
            className={`flex items-center gap-2 rounded-md border px-3 py-1.5 text-sm ${online ? "border-panel-600 bg-panel-850" : "border-aspect-danger/70 bg-aspect-danger/15"}`}
          >
            <span aria-hidden="true" className={`h-2.5 w-2.5 rounded-full ${online ? "bg-aspect-clear" : "bg-aspect-danger"}`} />
            <span className="font-semibold">{node.name}</span>
            <span className={online ? "text-ink-soft" : "font-semibold text-notice-error"}>{online ? "online" : state ? "offline" : "never seen"}</span>
            {since ? <span className="text-xs text-ink-faint">{since}</span> : null}
            {state?.fw ? <span className="text-xs text-ink-faint">fw {state.fw}</span> : null}
          </li>
        );
      })}
    </ul>
  );
}
