import { describe, expect, it } from "vitest";
import { SERIES_PALETTE, chartTicks, chartYRange, niceStep, seriesStyle, signedChartYRange, tickLabels } from "./chart-style.ts";

// Axis ranges and tick labels of the console's charts (issue 13, item 13). Expected values derived by hand.

describe("chart y range", () => {
  it("a still arm's TCP speed (round-off of 1e-17 mm/s) gets 0 … 10 mm/s, not a range of 1e-17 labelled 0 0 0", () => {
    expect(chartYRange(0, 1e-17, 10)).toEqual([0, 10]);
    expect(chartYRange(null, null, 10)).toEqual([0, 10]);
  });

  it("idle joint rates are shown symmetric about zero, ±1 deg/s", () => {
    expect(signedChartYRange(0, 0, 2)).toEqual([-1, 1]);
    expect(signedChartYRange(-1e-12, 3e-13, 2)).toEqual([-1, 1]);
    expect(signedChartYRange(null, null, 2)).toEqual([-1, 1]);
  });

  it("jogging rates keep zero inside and widen outward to whole steps", () => {
    const [lo, hi] = signedChartYRange(-37.2, 88.1, 2);
    expect(lo).toBeLessThanOrEqual(-37.2);
    expect(hi).toBeGreaterThanOrEqual(88.1);
    // Steps of niceStep(125.3 / 4) = 50: −50 … 100.
    expect([lo, hi]).toEqual([-50, 100]);
    expect(chartYRange(12, 181.9, 10)).toEqual([0, 200]);
    expect(chartYRange(-5, -2, 10)).toEqual([-10, 0]);
  });

  it("steps are 1, 2, 2.5 or 5 × 10ⁿ, at or above the rough step", () => {
    expect([0.3, 1, 1.2, 2.2, 3, 7, 45].map(niceStep)).toEqual([0.5, 1, 2, 2.5, 5, 10, 50]);
    expect(niceStep(0)).toBe(1);
  });
});

describe("chart ticks", () => {
  it("are the whole steps of a quarter of the span: 3 to 5 of them, zero among them", () => {
    expect(chartTicks(-1, 1)).toEqual([-1, -0.5, 0, 0.5, 1]);
    expect(chartTicks(0, 10)).toEqual([0, 2.5, 5, 7.5, 10]);
    expect(chartTicks(-50, 100)).toEqual([-50, 0, 50, 100]);
    expect(chartTicks(0, 200)).toEqual([0, 50, 100, 150, 200]);
    for (const [lo, hi] of [signedChartYRange(-37.2, 88.1, 2), chartYRange(0, 181.9, 10), chartYRange(0, 93, 10), signedChartYRange(-12.4, 13, 2)]) {
      const ticks = chartTicks(lo, hi);
      expect(ticks.length).toBeGreaterThanOrEqual(3);
      expect(ticks.length).toBeLessThanOrEqual(5);
      expect(ticks).toContain(0);
      expect(ticks[0]).toBe(lo);
      expect(ticks.at(-1)).toBe(hi);
    }
  });
});

describe("tick labels", () => {
  it("carry the decimals the step needs, and read distinct, non-zero ticks as distinct labels", () => {
    expect(tickLabels([-1, -0.5, 0, 0.5, 1], 0.5)).toEqual(["-1.0", "-0.5", "0", "0.5", "1.0"]);
    expect(tickLabels([0, 2.5, 5, 7.5, 10], 2.5)).toEqual(["0", "2.5", "5.0", "7.5", "10.0"]);
    expect(tickLabels([0, 0.25, 0.5], 0.25)).toEqual(["0", "0.25", "0.50"]);
    expect(tickLabels([-50, 0, 50, 100], 50)).toEqual(["-50", "0", "50", "100"]);
  });

  it("show zero as 0 however round-off reached it", () => {
    expect(tickLabels([-0.2, -1.3877787807814457e-17, 0.2], 0.2)).toEqual(["-0.2", "0", "0.2"]);
  });
});

describe("series palette", () => {
  it("gives six joints six different colours, and a seventh joint a seventh", () => {
    const strokes = Array.from({ length: 7 }, (_, j) => seriesStyle(j).stroke.toLowerCase());
    expect(new Set(strokes).size).toBe(7);
  });

  it("is the Okabe–Ito palette without its black (Okabe & Ito 2008)", () => {
    const okabeIto = ["#e69f00", "#56b4e9", "#009e73", "#f0e442", "#0072b2", "#d55e00", "#cc79a7"];
    expect(SERIES_PALETTE.map((s) => s.stroke.toLowerCase()).sort()).toEqual([...okabeIto].sort());
  });

  it("repeats the colours with a dotted line past the palette, so an eighth series differs from the first", () => {
    expect(seriesStyle(7).stroke).toBe(seriesStyle(0).stroke);
    expect(seriesStyle(7).dash).toEqual([2, 2]);
    expect(seriesStyle(0).dash).toBeUndefined();
  });
});
