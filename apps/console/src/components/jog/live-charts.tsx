import { memo, useEffect, useRef } from "react";
import uPlot from "uplot";
import "uplot/dist/uPlot.min.css";
import type { ProfileParams } from "@jogwright/shared";
import { cn } from "../../lib/cn.ts";
import { formatFixed } from "../../lib/format.ts";
import type { ChartColumns, ChartData, FrameSource } from "../../lib/frame-trace.ts";
import { AXIS_LABEL_FONT, AXIS_STYLE, THRESHOLD_STYLES, chartTicks, chartYRange, seriesStyle, signedChartYRange, tickLabels } from "../charts/chart-style.ts";
import { chartColumns, sigmaLinesOf, type ChartKey, type SigmaLines } from "./chart-columns.ts";
import { CollapsiblePanel } from "./collapsible-panel.tsx";

/**
 * uPlot charts over a rolling window of the FrameSource's trace: joint rates (deg/s), σ_min and λ (mm) with
 * the profile's ε and σ_stop as lines, TCP speed commanded vs achieved (mm/s). Redrawn with setData at most
 * 15 times a second and only when new frames arrived, so the 3D view keeps its 60 fps. Each chart's host
 * carries `data-points` (points drawn) and `data-y-ticks` (the y tick labels drawn) for the tests.
 */

const WINDOW_S = 10;
const REDRAW_MS = 66;
const HEIGHT_PX = 150;

interface ChartSpec {
  key: ChartKey;
  title: string;
  unit: string;
  series: (jointCount: number, lines: SigmaLines) => uPlot.Series[];
  /** The y range from the data's min and max (chart-style.ts: zero inside, a least span). */
  range: (min: number | null, max: number | null) => [number, number];
}

const SPECS: Record<ChartKey, ChartSpec> = {
  jointRates: {
    key: "jointRates",
    title: "Joint rates",
    unit: "deg/s",
    series: (n) => Array.from({ length: n }, (_, j) => ({ label: `J${j + 1}`, width: 1.5, ...seriesStyle(j) })),
    // ±1 deg/s at rest: distinct ticks, and a creeping joint still reads against zero.
    range: (min, max) => signedChartYRange(min, max, 2),
  },
  sigma: {
    key: "sigma",
    title: "σ_min and λ",
    unit: "mm",
    series: (_n, lines) => [
      { label: "σ_min", stroke: "#8f8cff", width: 2 },
      { label: "λ", stroke: "#e6e9f0", width: 1.5, dash: [6, 3] },
      ...(lines.epsilonMm !== null ? [{ label: `ε ${formatFixed(lines.epsilonMm, 1)}`, width: 1, ...THRESHOLD_STYLES.epsilon }] : []),
      ...(lines.sigmaStopMm !== null ? [{ label: `σ_stop ${formatFixed(lines.sigmaStopMm, 1)}`, width: 1, ...THRESHOLD_STYLES.sigmaStop }] : []),
    ],
    range: (min, max) => chartYRange(min, max, 10),
  },
  speed: {
    key: "speed",
    title: "TCP speed",
    unit: "mm/s",
    series: () => [
      { label: "commanded", stroke: "#8f8cff", width: 2 },
      { label: "achieved", stroke: "#e6e9f0", width: 1.5, dash: [6, 3] },
    ],
    // 0 … 10 mm/s at rest (round-off of ~1e-17 mm/s used to label the axis "0 0 0").
    range: (min, max) => chartYRange(min, max, 10),
  },
};

export const CHART_KEYS: readonly ChartKey[] = ["jointRates", "sigma", "speed"];
export const CHART_TITLES: Record<ChartKey, string> = { jointRates: SPECS.jointRates.title, sigma: SPECS.sigma.title, speed: SPECS.speed.title };

function makeOptions(spec: ChartSpec, series: uPlot.Series[], width: number, host: HTMLElement): uPlot.Options {
  return {
    width,
    height: HEIGHT_PX,
    legend: { live: false },
    cursor: { show: false },
    scales: {
      x: { time: false, range: (_u, _min, max) => [max - WINDOW_S, max] },
      y: { range: (_u, min, max) => spec.range(min, max) },
    },
    axes: [
      { ...AXIS_STYLE, label: "t [s]", labelFont: AXIS_LABEL_FONT, size: 34, labelSize: 14 },
      {
        ...AXIS_STYLE,
        label: spec.unit,
        labelFont: AXIS_LABEL_FONT,
        size: 52,
        labelSize: 14,
        splits: (_u, _axis, min, max) => chartTicks(min, max),
        values: (_u, splits) => {
          const labels = tickLabels(splits, splits.length > 1 ? splits[1]! - splits[0]! : 1);
          host.dataset.yTicks = labels.join(" ");
          return labels;
        },
      },
    ],
    series: [{ label: "t" }, ...series],
  };
}

/** Each chart's uPlot instance by its host element, for the shared redraw timer. */
const plots = new WeakMap<HTMLDivElement, uPlot>();

function Chart({ spec, jointCount, lines }: { spec: ChartSpec; jointCount: number; lines: SigmaLines }) {
  const hostRef = useRef<HTMLDivElement>(null);
  const { epsilonMm, sigmaStopMm } = lines;

  useEffect(() => {
    const host = hostRef.current;
    if (!host) return;
    const series = spec.series(jointCount, { epsilonMm, sigmaStopMm });
    const empty: ChartColumns = [new Float64Array(0), ...series.map(() => new Float64Array(0))];
    const plot = new uPlot(makeOptions(spec, series, Math.max(200, host.clientWidth), host), empty as unknown as uPlot.AlignedData, host);
    plots.set(host, plot);
    host.dataset.points = "0";
    const resize = new ResizeObserver(() => plot.setSize({ width: Math.max(200, host.clientWidth), height: HEIGHT_PX }));
    resize.observe(host);
    return () => {
      resize.disconnect();
      plots.delete(host);
      plot.destroy();
    };
  }, [spec, jointCount, epsilonMm, sigmaStopMm]);

  return (
    <figure className="flex min-w-0 flex-col gap-1 rounded-lg border border-ink-700 bg-ink-850 p-3">
      <figcaption className="text-sm font-semibold text-ink-100">
        {spec.title} <span className="text-xs font-normal text-ink-400">{spec.unit}, last {WINDOW_S} s</span>
      </figcaption>
      <div
        ref={hostRef}
        data-testid={`chart-${spec.key}`}
        data-points="0"
        data-epsilon-mm={spec.key === "sigma" && epsilonMm !== null ? String(epsilonMm) : undefined}
        data-sigma-stop-mm={spec.key === "sigma" && sigmaStopMm !== null ? String(sigmaStopMm) : undefined}
        className="min-w-0"
      />
    </figure>
  );
}

/**
 * Live charts (`keys`, in that order); `source` is the socket client or a replay. `isCollapsible`: each
 * chart folds to its title (the ones below the drive workspace's first screen).
 */
export const LiveCharts = memo(function LiveCharts({ source, jointCount, params, keys = CHART_KEYS, isCollapsible = false, className }: {
  source: FrameSource;
  jointCount: number;
  params: ProfileParams | null;
  keys?: readonly ChartKey[];
  isCollapsible?: boolean;
  className?: string;
}) {
  const rootRef = useRef<HTMLDivElement>(null);
  const lines = sigmaLinesOf(params);
  const linesRef = useRef(lines);
  useEffect(() => {
    linesRef.current = lines;
  });

  // One timer for these charts: read the trace once, hand each chart its columns.
  useEffect(() => {
    const drawnSerial = new WeakMap<uPlot, number>();
    const timer = setInterval(() => {
      const root = rootRef.current;
      if (!root) return;
      const trace = source.trace;
      let data: ChartData | null = null;
      for (const key of CHART_KEYS) {
        const host = root.querySelector<HTMLDivElement>(`[data-testid="chart-${key}"]`);
        const plot = host ? plots.get(host) : undefined;
        if (!host || !plot || drawnSerial.get(plot) === trace.serial) continue;
        data ??= trace.chartData(WINDOW_S);
        const columns = chartColumns(key, data, linesRef.current);
        if (columns.length !== plot.series.length) continue;
        plot.setData(columns as unknown as uPlot.AlignedData);
        drawnSerial.set(plot, trace.serial);
        host.dataset.points = String(columns[0].length);
      }
    }, REDRAW_MS);
    return () => clearInterval(timer);
  }, [source]);

  return (
    <div ref={rootRef} className={cn("grid grid-cols-1 gap-4", className)} data-testid="live-charts">
      {keys.map((key) =>
        isCollapsible ? (
          <CollapsiblePanel key={key} id={`chart-${key}`} title={SPECS[key].title} isChart>
            <Chart spec={SPECS[key]} jointCount={jointCount} lines={lines} />
          </CollapsiblePanel>
        ) : (
          <Chart key={key} spec={SPECS[key]} jointCount={jointCount} lines={lines} />
        ),
      )}
    </div>
  );
});
