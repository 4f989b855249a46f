import { useEffect, useRef } from "react";
import uPlot from "uplot";
import "uplot/dist/uPlot.min.css";

interface UPlotChartProps {
  /** Read aloud in place of the drawing; the figures are also in a table beside it. */
  label: string;
  options: Omit<uPlot.Options, "width">;
  data: uPlot.AlignedData;
}

/** Smallest width drawn, so a chart stays legible in a narrow column. */
const MIN_WIDTH_PX = 280;

/**
 * One uPlot chart that fills its container's width (and follows it on resize). uPlot draws
 * on a canvas outside React: the instance is made on mount and rebuilt when the options or
 * data change, and destroyed on unmount.
 */
export function UPlotChart({ label, options, data }: UPlotChartProps) {
  const box = useRef<HTMLDivElement>(null);
  useEffect(() => {
    const el = box.current;
    if (!el) return;
    const width = () => Math.max(MIN_WIDTH_PX, el.clientWidth);
    const chart = new uPlot({ ...options, width: width() }, data, el);
    const resize = new ResizeObserver(() => chart.setSize({ width: width(), height: options.height }));
    resize.observe(el);
    return () => {
      resize.disconnect();
      chart.destroy();
    };
  }, [options, data]);
  return <div ref={box} role="img" aria-label={label} className="report-chart w-full" />;
}
