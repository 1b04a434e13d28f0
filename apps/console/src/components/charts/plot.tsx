import { useEffect, useRef } from "react";
import uPlot from "uplot";
import "uplot/dist/uPlot.min.css";
import { AXIS_LABEL_FONT, AXIS_STYLE } from "./chart-style.ts";

/**
 * A static uPlot chart (the bench's runs, sweeps): the data is drawn once and again whenever it changes;
 * it follows its container's width. Its series (two versions, or a sweep's points) are told apart by
 * lightness, dash pattern and the legend ("Ink & Iris" tokens); the axes share chart-style.ts with the
 * live charts. `points`: a scatter (no lines). `onPick`: a click on the plot area reports
 * the nearest data index of the first series.
 */

export const SERIES_STYLES: { stroke: string; dash?: number[] }[] = [
  { stroke: "#8f8cff" },
  { stroke: "#e6e9f0", dash: [6, 3] },
  { stroke: "#b9b7ff", dash: [2, 3] },
  { stroke: "#a9b1c2", dash: [8, 2, 2, 2] },
];

export interface PlotSeries {
  label: string;
  /** Draw only the points of this series (a scatter), larger when `emphasis`. */
  points?: boolean;
  emphasis?: boolean;
}

export function Plot({
  title, xLabel, yLabel, data, series, testId, onPick, height = 180,
}: {
  title: string;
  xLabel: string;
  yLabel: string;
  /** [xs, ys of each series]; null where a series has no value. */
  data: (number | null)[][];
  series: PlotSeries[];
  testId: string;
  onPick?: (index: number) => void;
  height?: number;
}) {
  const hostRef = useRef<HTMLDivElement>(null);
  const pickRef = useRef(onPick);
  useEffect(() => {
    pickRef.current = onPick;
  }, [onPick]);

  useEffect(() => {
    const host = hostRef.current;
    if (!host) return;
    const options: uPlot.Options = {
      width: Math.max(240, host.clientWidth),
      height,
      legend: { live: false },
      cursor: { drag: { x: false, y: false } },
      scales: { x: { time: false } },
      axes: [
        { ...AXIS_STYLE, label: xLabel, labelFont: AXIS_LABEL_FONT, size: 34, labelSize: 14 },
        { ...AXIS_STYLE, label: yLabel, labelFont: AXIS_LABEL_FONT, size: 56, labelSize: 14 },
      ],
      series: [
        { label: xLabel },
        ...series.map((s, i) => {
          const style = SERIES_STYLES[i % SERIES_STYLES.length]!;
          return s.points
            ? { label: s.label, stroke: style.stroke, paths: () => null, points: { show: true, size: s.emphasis ? 10 : 6, fill: s.emphasis ? style.stroke : "transparent" } }
            : { label: s.label, width: 1.5, ...style, points: { show: false } };
        }),
      ],
      hooks: {
        ready: [
          (u) => {
            u.over.addEventListener("click", () => {
              const i = u.cursor.idx;
              if (i !== null && i !== undefined) pickRef.current?.(i);
            });
          },
        ],
      },
    };
    const plot = new uPlot(options, data as unknown as uPlot.AlignedData, host);
    host.dataset.points = String(data[0]?.length ?? 0);
    const resize = new ResizeObserver(() => plot.setSize({ width: Math.max(240, host.clientWidth), height }));
    resize.observe(host);
    return () => {
      resize.disconnect();
      plot.destroy();
    };
  }, [data, series, xLabel, yLabel, height]);

  return (
    <figure className="flex min-w-0 flex-col gap-1 rounded-lg border border-ink-700 bg-ink-850 p-3">
      <figcaption className="text-sm font-semibold text-ink-100">{title}</figcaption>
      <div ref={hostRef} data-testid={testId} className="min-w-0" />
    </figure>
  );
}
