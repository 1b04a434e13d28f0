import { describe, expect, it } from "vitest";
import { dampingFor, dampingForScheme, dampingForSchemeInto } from "./index.ts";
import type { DampingScheme } from "./index.ts";
import { rng } from "./test-fixtures.ts";

describe("dampingFor, singular-value schedule", () => {
  const opts = { epsilon: 0.1, lambdaMax: 0.05 };

  it("is zero outside the singular region and rises to λmax at the singularity", () => {
    // Chiaverini, Siciliano & Egeland 1994; Chiaverini 1997 (from memory): λ² = (1 − (σ/ε)²)·λmax² for σ < ε.
    expect(dampingFor(0.2, opts)).toBe(0);
    expect(dampingFor(0.1, opts)).toBe(0);
    expect(dampingFor(0, opts)).toBe(0.05);
    let prev = 0;
    for (let s = 0.1; s >= 0; s -= 0.001) {
      const l = dampingFor(Math.max(s, 0), opts);
      expect(l).toBeGreaterThanOrEqual(prev - 1e-15);
      prev = l;
    }
  });

  it("follows λ² = (1 − (σ/ε)²)·λmax² inside the region", () => {
    // Chiaverini, Siciliano & Egeland 1994 (from memory) for the formula, evaluated here; the
    // METHODS.md §2a [CALC] table (λ = 0.0300, 0.04330, 0.04899) is the secondary value.
    for (const [s, table] of [[0.08, 0.03], [0.05, 0.0433], [0.02, 0.04899]] as const) {
      const expected = Math.sqrt((1 - (s / 0.1) ** 2) * 0.05 ** 2);
      expect(dampingFor(s, opts)).toBeCloseTo(expected, 15);
      expect(dampingFor(s, opts)).toBeCloseTo(table, 5);
    }
  });

  it("keeps the in-region gain σ/(σ² + λ²) at most 1/(2λmax·sqrt(1 − λmax²/ε²)) when λmax ≤ ε/√2", () => {
    // Derived (METHODS.md §2a derivation; 11.54701 for ε = 0.1, λmax = 0.05 [CALC], secondary).
    let best = 0;
    for (let s = 1e-6; s < 0.1; s += 1e-6) {
      const l = dampingFor(s, opts);
      best = Math.max(best, s / (s * s + l * l));
    }
    const bound = 1 / (2 * 0.05 * Math.sqrt(1 - 0.25));
    expect(best).toBeLessThanOrEqual(bound * (1 + 1e-12));
    expect(best).toBeCloseTo(11.54701, 4);
  });
});

describe("dampingFor, other schemes", () => {
  it("returns the fixed λ whatever σ is", () => {
    // Our scheme option (common practice, no source).
    expect(dampingFor(0.001, { kind: "fixed", lambda: 0.02 })).toBe(0.02);
    expect(dampingFor(5, { kind: "fixed", lambda: 0.02 })).toBe(0.02);
  });

  it("follows the manipulability schedule λ² = λ0²·(1 − w/w0)² below w0", () => {
    // Nakamura & Hanafusa 1986 as commonly cited, from memory (k = λ² reading, PRODUCT.md); secondary:
    // METHODS.md §2b [CALC] table λ = 0.0125, 0.025, 0.0375, 0.05 for w = 0.0075 … 0, w0 = 0.01, λ0 = 0.05.
    const scheme = { kind: "manipulability" as const, w0: 0.01, lambda0: 0.05 };
    for (const [w, table] of [[0.0075, 0.0125], [0.005, 0.025], [0.0025, 0.0375], [0, 0.05]] as const) {
      expect(dampingFor(0.3, scheme, w)).toBeCloseTo(Math.sqrt(0.05 ** 2 * (1 - w / 0.01) ** 2), 15);
      expect(dampingFor(0.3, scheme, w)).toBeCloseTo(table, 12);
    }
    expect(dampingFor(0.3, scheme, 0.02)).toBe(0);
  });
});

describe("dampingForScheme, the one implementation the control step calls", () => {
  it("gives the scheme's largest λ for a NaN σ (or w), in both the number and the typed-array form", () => {
    // Issue 8: the step's private copy returned 0 for NaN σ while damping.ts returned λmax. One answer
    // now, the safe one (our contract, common practice, no source).
    expect(dampingForScheme({ kind: "singular-value", epsilon: 0.04, lambdaMax: 0.03 }, NaN, 0.1)).toBe(0.03);
    expect(dampingForScheme({ kind: "manipulability", w0: 0.01, lambda0: 0.02 }, 0.5, NaN)).toBe(0.02);
    expect(dampingForScheme({ kind: "fixed", lambda: 0.01 }, NaN, NaN)).toBe(0.01);
    const io = Float64Array.from([NaN, 0, -1]);
    dampingForSchemeInto({ kind: "singular-value", epsilon: 0.04, lambdaMax: 0.03 }, io);
    expect(io[2]).toBe(0.03);
  });

  it("agrees between its number and typed-array forms for thousands of random inputs with NaN, 0 and Infinity", () => {
    // Pinning test (derived): the typed-array form is the implementation; the number form wraps it; both
    // equal the schedules' formulas (Chiaverini et al. 1994; Nakamura & Hanafusa 1986 — from memory).
    const next = rng(41);
    const special = [0, -0, NaN, Infinity, 1e-300, 1e300];
    const pick = (x: number) => (next() < 0.1 ? special[Math.floor(next() * special.length)]! : x);
    const io = new Float64Array(3);
    for (let trial = 0; trial < 5000; trial++) {
      const scheme: DampingScheme =
        trial % 3 === 0 ? { kind: "fixed", lambda: 0.1 * next() }
          : trial % 3 === 1 ? { kind: "singular-value", epsilon: 0.01 + 0.2 * next(), lambdaMax: 0.1 * next() }
            : { kind: "manipulability", w0: 0.001 + 0.1 * next(), lambda0: 0.1 * next() };
      const sigma = pick(0.3 * next()), w = pick(0.2 * next());
      io[0] = sigma; io[1] = w;
      dampingForSchemeInto(scheme, io);
      const l = dampingForScheme(scheme, sigma, w);
      expect(Object.is(io[2], l)).toBe(true);
      let formula: number;
      if (scheme.kind === "fixed") formula = scheme.lambda;
      else if (scheme.kind === "singular-value") {
        formula = Number.isNaN(sigma) ? scheme.lambdaMax : sigma >= scheme.epsilon ? 0
          : scheme.lambdaMax * Math.sqrt(1 - (Math.max(sigma, 0) / scheme.epsilon) ** 2);
      } else {
        formula = Number.isNaN(w) ? scheme.lambda0 : w >= scheme.w0 ? 0 : scheme.lambda0 * (1 - Math.max(w, 0) / scheme.w0);
      }
      expect(l).toBeCloseTo(formula, 15);
      expect(l).toBeGreaterThanOrEqual(0);
    }
  });
});
