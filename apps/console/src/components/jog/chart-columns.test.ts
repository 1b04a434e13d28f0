import { describe, expect, it } from "vitest";
import { defaultProfileParams } from "@jogwright/shared";
import type { ChartData } from "../../lib/frame-trace.ts";
import { chartColumns, sigmaLinesOf } from "./chart-columns.ts";
import { fitHeightPx } from "./fit-height.ts";

// The σ chart's threshold lines and the drive workspace's first-screen height (issue 13, items 11 and 13).

const params = defaultProfileParams([2.6, 2.6, 3.3, 5.2, 5.2, 7.8]);

describe("σ chart lines", () => {
  it("draw ε of the singular-value schedule and σ_stop of the stop-before guard, in mm", () => {
    const p = { ...params, damping: { kind: "singular-value" as const, epsilonM: 0.04, lambdaMaxM: 0.04 }, guard: { policy: "stop-before" as const, sigmaStopM: 0.02 } };
    expect(sigmaLinesOf(p)).toEqual({ epsilonMm: 40, sigmaStopMm: 20 });
  });

  it("leave out ε for a scheme without one and σ_stop when the guard damps through", () => {
    const p = { ...params, damping: { kind: "fixed" as const, lambdaM: 0.01 }, guard: { policy: "damp-through" as const, sigmaStopM: 0.02 } };
    expect(sigmaLinesOf(p)).toEqual({ epsilonMm: null, sigmaStopMm: null });
    expect(sigmaLinesOf(null)).toEqual({ epsilonMm: null, sigmaStopMm: null });
  });

  it("add one constant column per line, as long as the time column", () => {
    const t = new Float64Array([0, 0.1, 0.2]);
    const data: ChartData = { jointRates: [t, new Float64Array(3)], sigma: [t, new Float64Array([180, 170, 160]), new Float64Array(3)], speed: [t, new Float64Array(3), new Float64Array(3)] };
    const columns = chartColumns("sigma", data, { epsilonMm: 40, sigmaStopMm: 20 });
    expect(columns).toHaveLength(5);
    expect([...columns[3]!]).toEqual([40, 40, 40]);
    expect([...columns[4]!]).toEqual([20, 20, 20]);
    expect(chartColumns("sigma", data, { epsilonMm: 40, sigmaStopMm: null })).toHaveLength(4);
    expect(chartColumns("jointRates", data, { epsilonMm: 40, sigmaStopMm: 20 })).toBe(data.jointRates);
  });
});

describe("first-screen height", () => {
  it("ends at the bottom of the window, within its bounds", () => {
    // 900 px window, workspace starting at 387 px, 16 px margin: 497 px.
    expect(fitHeightPx(900, 387, 16, 460, 1100)).toBe(497);
    // Scrolled far down the page (the bench's replay): never below the minimum.
    expect(fitHeightPx(900, 1500, 16, 460, 1100)).toBe(460);
    // A very tall window: never above the maximum.
    expect(fitHeightPx(2160, 300, 16, 460, 1100)).toBe(1100);
  });
});
