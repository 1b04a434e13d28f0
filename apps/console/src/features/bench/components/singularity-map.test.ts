import { describe, expect, it } from "vitest";
import { contourSegments } from "./singularity-map.tsx";

// Marching squares (Lorensen & Cline 1987, "Marching cubes", SIGGRAPH, in two dimensions; from memory):
// a contour crosses a cell edge where the level lies between the edge's corner values, linearly placed.

describe("contourSegments", () => {
  it("draws one straight segment per cell row for a plane rising along x, at the level's x", () => {
    const cols = 5, rows = 4;
    const values = Array.from({ length: cols * rows }, (_, i) => i % cols); // value = column index
    const segments = contourSegments(values, cols, rows, 2.5);
    expect(segments).toHaveLength(rows - 1);
    for (const [x0, , x1] of segments) {
      expect(x0).toBeCloseTo(2.5, 12);
      expect(x1).toBeCloseTo(2.5, 12);
    }
  });

  it("skips cells with an unreachable corner and draws nothing where the level is never crossed", () => {
    const values = [0, 1, null, 3];
    expect(contourSegments(values, 2, 2, 0.5)).toEqual([]);
    expect(contourSegments([0, 0, 0, 0], 2, 2, 0.5)).toEqual([]);
  });
});
