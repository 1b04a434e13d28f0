import { describe, expect, it } from "vitest";
import { GUARD_STATES } from "@jogwright/shared";
import { singularityInWords } from "./status-panels.tsx";

describe("the singularity indicator's headline", () => {
  // The default profile's thresholds (profile-fields.ts: σ_stop 20 mm, ε 40 mm); behaviour of our guard design.
  const epsilon = 0.04, stop = 0.02;

  it("follows the guard's state first, so a hold just outside σ_stop never reads as clear or merely damped", () => {
    for (const sigma of [0.021, 0.05, 0.2]) {
      expect(singularityInWords({ sigmaMin: sigma, guardState: "stopped" }, epsilon, stop)).toEqual({
        label: "Held at the guard — acknowledge, or back out",
        tone: "stop",
      });
    }
    expect(singularityInWords({ sigmaMin: 0.015, guardState: "backing-out" }, epsilon, stop).label).toMatch(/Backing out/);
    expect(singularityInWords({ sigmaMin: 0.005, guardState: "acknowledged" }, epsilon, stop).label).toMatch(/acknowledged/);
  });

  it("reads σ_min against σ_stop and ε when the guard holds nothing", () => {
    expect(singularityInWords({ sigmaMin: 0.03, guardState: "clear" }, epsilon, stop)).toEqual({ label: "Inside the damped region", tone: "warn" });
    expect(singularityInWords({ sigmaMin: 0.08, guardState: "clear" }, epsilon, stop)).toEqual({ label: "Clear of singularities", tone: "ok" });
    expect(singularityInWords({ sigmaMin: 0.01, guardState: "off" }, epsilon, null)).toEqual({ label: "Inside the damped region", tone: "warn" });
  });

  it("never calls a guard state other than clear or off 'Clear of singularities'", () => {
    for (const guardState of GUARD_STATES) {
      const { label } = singularityInWords({ sigmaMin: 1, guardState }, epsilon, stop);
      if (guardState !== "clear" && guardState !== "off") expect(label).not.toBe("Clear of singularities");
    }
  });
});
