import { memo, useEffect, useRef } from "react";
import uPlot from "uplot";
import "uplot/dist/uPlot.min.css";
import type { ChartColumns, ChartData, FrameSource } from "../../lib/frame-trace.ts";

/**
 * Three uPlot charts over a rolling window of the FrameSource's trace: joint rates (deg/s), σ_min and λ
 * (mm), TCP speed commanded vs achieved (mm/s). Redrawn with setData at most 15 times a second and only
 * when new frames arrived, so the 3D view keeps its 60 fps.
 */

const WINDOW_S = 10;
const REDRAW_MS = 66;
const HEIGHT_PX = 150;

// "Ink & Iris" tokens only; series are told apart by dash pattern and the legend, not by state colours.
const AXIS = { stroke: "#a9b1c2", grid: { stroke: "#283040", width: 1 }, ticks: { stroke: "#283040", width: 1 }, font: "11px 'JetBrains Mono', monospace" };
const JOINT_STYLES: { stroke: string; dash?: number[] }[] = [
  { stroke: "#8f8cff" },
  { stroke: "#e6e9f0" },
  { stroke: "#b9b7ff", dash: [6, 3] },
  { stroke: "#a9b1c2", dash: [6, 3] },
  { stroke: "#8f8cff", dash: [2, 3] },
  { stroke: "#e6e9f0", dash: [2, 3] },
  { stroke: "#8089a0" },
  { stroke: "#8089a0", dash: [6, 3] },
];

interface ChartSpec {
  key: keyof ChartData;
  title: string;
  unit: string;
  series: (jointCount: number) => uPlot.Series[];
}

const CHARTS: ChartSpec[] = [
  {
    key: "jointRates",
    title: "Joint rates",
    unit: "deg/s",
    series: (n) =>
      Array.from({ length: n }, (_, j) => ({
        label: `J${j + 1}`,
        width: 1.5,
        ...JOINT_STYLES[j % JOINT_STYLES.length],
      })),
  },
  {
    key: "sigma",
    title: "σ_min and λ",
    unit: "mm",
    series: () => [
      { label: "σ_min", stroke: "#8f8cff", width: 2 },
      { label: "λ", stroke: "#e6e9f0", width: 1.5, dash: [6, 3] },
    ],
  },
  {
    key: "speed",
    title: "TCP speed",
    unit: "mm/s",
    series: () => [
      { label: "commanded", stroke: "#8f8cff", width: 2 },
      { label: "achieved", stroke: "#e6e9f0", width: 1.5, dash: [6, 3] },
    ],
  },
];

function makeOptions(spec: ChartSpec, jointCount: number, width: number): uPlot.Options {
  return {
    width,
    height: HEIGHT_PX,
    legend: { live: false },
    cursor: { show: false },
    scales: {
      x: { time: false, range: (_u, _min, max) => [max - WINDOW_S, max] },
      y: { range: (_u, min, max) => (min === max ? [min - 1, max + 1] : [Math.min(0, min), Math.max(0, max)]) },
    },
    axes: [
      { ...AXIS, label: "t [s]", labelFont: "11px 'Atkinson Hyperlegible Next', sans-serif", size: 34, labelSize: 14 },
      { ...AXIS, label: spec.unit, labelFont: "11px 'Atkinson Hyperlegible Next', sans-serif", size: 52, labelSize: 14 },
    ],
    series: [{ label: "t" }, ...spec.series(jointCount)],
  };
}

/** Each chart's uPlot instance by its host element, for the shared redraw timer. */
const plots = new WeakMap<HTMLDivElement, uPlot>();

function Chart({ spec, jointCount }: { spec: ChartSpec; jointCount: number }) {
  const hostRef = useRef<HTMLDivElement>(null);
  const plotRef = useRef<uPlot | null>(null);

  useEffect(() => {
    const host = hostRef.current;
    if (!host) return;
    const empty: ChartColumns = [new Float64Array(0), ...spec.series(jointCount).map(() => new Float64Array(0))];
    const plot = new uPlot(makeOptions(spec, jointCount, Math.max(200, host.clientWidth)), empty as unknown as uPlot.AlignedData, host);
    plotRef.current = plot;
    plots.set(host, plot);
    const resize = new ResizeObserver(() => plot.setSize({ width: Math.max(200, host.clientWidth), height: HEIGHT_PX }));
    resize.observe(host);
    return () => {
      resize.disconnect();
      plots.delete(host);
      plot.destroy();
      plotRef.current = null;
    };
  }, [spec, jointCount]);

  return (
    <figure className="flex min-w-0 flex-col gap-1 rounded-lg border border-ink-700 bg-ink-850 p-3">
      <figcaption className="text-sm font-semibold text-ink-100">
        {spec.title} <span className="text-xs font-normal text-ink-400">{spec.unit}, last {WINDOW_S} s</span>
      </figcaption>
      <div ref={hostRef} data-testid={`chart-${spec.key}`} data-points="0" className="min-w-0" />
    </figure>
  );
}

/** The live charts; `source` is the socket client or a replay. */
export const LiveCharts = memo(function LiveCharts({ source, jointCount }: { source: FrameSource; jointCount: number }) {
  const rootRef = useRef<HTMLDivElement>(null);

  // One timer for all three charts: read the trace once, hand each chart its columns.
  useEffect(() => {
    const drawnSerial = new WeakMap<uPlot, number>();
    const timer = setInterval(() => {
      const root = rootRef.current;
      if (!root) return;
      const trace = source.trace;
      let data: ChartData | null = null;
      for (const spec of CHARTS) {
        const host = root.querySelector<HTMLDivElement>(`[data-testid="chart-${spec.key}"]`);
        const plot = host ? plots.get(host) : undefined;
        if (!host || !plot || drawnSerial.get(plot) === trace.serial) continue;
        data ??= trace.chartData(WINDOW_S);
        const columns = data[spec.key];
        if (columns.length !== plot.series.length) continue;
        plot.setData(columns as unknown as uPlot.AlignedData);
        drawnSerial.set(plot, trace.serial);
        host.dataset.points = String(columns[0].length);
      }
    }, REDRAW_MS);
    return () => clearInterval(timer);
  }, [source]);

  return (
    <div ref={rootRef} className="grid grid-cols-1 gap-4 xl:grid-cols-3" data-testid="live-charts">
      {CHARTS.map((spec) => (
        <Chart key={spec.key} spec={spec} jointCount={jointCount} />
      ))}
    </div>
  );
});
