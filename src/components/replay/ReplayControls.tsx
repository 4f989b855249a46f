import { useId } from "react";
import { PLAYBACK_SPEEDS, type PlaybackSpeed } from "../../lib/replay";
import { Button } from "../ui/Button";

interface ReplayControlsProps {
  cursor: number;
  last: number;
  goto: (index: number) => void;
  playing: boolean;
  onPlay: () => void;
  onPause: () => void;
  speed: PlaybackSpeed;
  onSpeed: (speed: PlaybackSpeed) => void;
  /** Words for the step under the cursor, e.g. "Pulse at ME (12.350 s)". */
  label: string;
}

/** Step, play or pause at a multiple of the recorded pace, and a scrubber over the whole session. */
export function ReplayControls({ cursor, last, goto, playing, onPlay, onPause, speed, onSpeed, label }: ReplayControlsProps) {
  const scrubberId = useId();
  return (
    <div className="space-y-3">
      <div className="flex flex-wrap items-center gap-2">
        <Button onClick={() => goto(0)} disabled={cursor === 0}>
          To start
        </Button>
        <Button onClick={() => goto(cursor - 1)} disabled={cursor === 0}>
          Step back
        </Button>
        {playing ? (
          <Button tone="primary" onClick={onPause}>
            Pause
          </Button>
        ) : (
          <Button tone="primary" onClick={onPlay} disabled={cursor >= last}>
            Play
          </Button>
        )}
        <Button onClick={() => goto(cursor + 1)} disabled={cursor >= last}>
          Step forward
        </Button>
        <Button onClick={() => goto(last)} disabled={cursor >= last}>
          To end
        </Button>
        <fieldset className="ml-2 flex items-center gap-1 text-sm">
          <legend className="sr-only">Playback speed</legend>
          {PLAYBACK_SPEEDS.map((s) => (
            <Button key={s} aria-pressed={speed === s} tone={speed === s ? "primary" : "plain"} onClick={() => onSpeed(s)}>
              {s}×
            </Button>
          ))}
        </fieldset>
      </div>
      <div className="flex items-center gap-3 text-sm">
        <label htmlFor={scrubberId} className="shrink-0 font-semibold text-ink-soft">
          Step {cursor} of {last}
        </label>
        <input
          id={scrubberId}
          type="range"
          min={0}
          max={last}
          value={cursor}
          onChange={(e) => goto(Number(e.target.value))}
          className="w-full accent-brass"
          aria-valuetext={`Step ${cursor}: ${label}`}
        />
      </div>
      <p className="text-sm text-ink">{label}</p>
    </div>
  );
}
