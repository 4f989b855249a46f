import { useEffect, useState } from "react";
import { playbackDelayMs, type PlaybackSpeed } from "../lib/replay";
import type { SimEntry } from "../lib/simulation";

/**
 * Plays a run forward at a multiple of its recorded pace: after each step it waits the
 * recorded gap to the next input divided by the speed, then moves the cursor on; it stops
 * by itself at the last step.
 */
export function usePlayback(history: readonly SimEntry[], cursor: number, goto: (index: number) => void) {
  const [playing, setPlaying] = useState(false);
  const [speed, setSpeed] = useState<PlaybackSpeed>(10);
  const atEnd = cursor >= history.length - 1;

  useEffect(() => {
    if (!playing || atEnd) return;
    const timer = setTimeout(() => goto(cursor + 1), playbackDelayMs(history, cursor, speed));
    return () => clearTimeout(timer);
  }, [playing, atEnd, history, cursor, speed, goto]);

  return { playing: playing && !atEnd, play: () => setPlaying(true), pause: () => setPlaying(false), speed, setSpeed };
}
