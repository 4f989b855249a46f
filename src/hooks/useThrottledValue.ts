import { useEffect, useRef, useState } from "react";

/**
 * The value, but changing at most once per `intervalMs` (the latest value always arrives).
 * For panels people read rather than watch — the state table and the event ticker — so a
 * burst of pushes does not re-lay them out every frame while the mimic stays instant.
 */
export function useThrottledValue<T>(value: T, intervalMs: number): T {
  const [shown, setShown] = useState(value);
  const lastShownAt = useRef(0);
  useEffect(() => {
    if (Object.is(value, shown)) return;
    const wait = lastShownAt.current + intervalMs - Date.now();
    if (wait <= 0) {
      lastShownAt.current = Date.now();
      setShown(value);
      return;
    }
    const timer = setTimeout(() => {
      lastShownAt.current = Date.now();
      setShown(value);
    }, wait);
    return () => clearTimeout(timer);
  }, [value, shown, intervalMs]);
  return shown;
}
