import { useMemo } from "react";
import uPlot from "uplot";
import type { SessionReportDto, SignalTimelineDto } from "@shared/contract/report";
import { aspectTimeline, pulsesPerTrain, waitsHistogram } from "../../lib/reportCharts";
import { UPlotChart } from "./UPlotChart";

// Path builders are made once: uPlot compares them by identity.
const STEPPED = uPlot.paths.stepped!({ align: 1 });
const BARS = uPlot.paths.bars!({ size: [0.8, 60] });
const NARROW_BARS = uPlot.paths.bars!({ size: [0.9, 24] });

export function AspectTimelineChart({ report, signal }: { report: SessionReportDto; signal: SignalTimelineDto }) {
  const chart = useMemo(() => aspectTimeline(report, signal, STEPPED), [report, signal]);
  return <UPlotChart label={`Aspects of signal ${signal.id}, ${signal.name}, through the session, with its trains`} options={chart.options} data={chart.data} />;
}

export function WaitsChart({ report }: { report: SessionReportDto }) {
  const chart = useMemo(() => waitsHistogram(report, BARS), [report]);
  return <UPlotChart label="Waits at each signal: how many trains waited how long" options={chart.options} data={chart.data} />;
}

export function PulsesChart({ report }: { report: SessionReportDto }) {
  const chart = useMemo(() => pulsesPerTrain(report, NARROW_BARS), [report]);
  return <UPlotChart label="Pulses each train gave at each detector; mismatched counts in red" options={chart.options} data={chart.data} />;
}
