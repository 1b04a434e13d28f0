import { useEffect, useRef, useState } from "react";
import { useQuery } from "@tanstack/react-query";
import type { MapResponse, ProfileVersion } from "@jogwright/shared";
import { Card } from "../../../components/ui/card.tsx";
import { NumberField } from "../../../components/ui/number-field.tsx";
import { QueryStatus } from "../../../components/ui/query-status.tsx";
import { SelectField } from "../../../components/ui/select-field.tsx";
import { benchKeys, fetchMap } from "../api/bench-api.ts";
import { DEG, MM } from "../../../components/bench/metric-rows.ts";

const SIZE_PX = 420;

type MapKind = "joints" | "cartesian-xz" | "cartesian-xy" | "cartesian-yz";

/** A map's request from the panel's choices (σ_min; null tool length: the arm's own tool). */
function requestOf(armId: number, kind: MapKind, toolLengthM: number | null, resolution: number) {
  return kind === "joints"
    ? { kind: "joints" as const, armId, toolLengthM, resolution }
    : { kind: "cartesian" as const, armId, toolLengthM, resolution, plane: kind.slice(10) as "xz" | "xy" | "yz", halfWidthM: 0.4 };
}

/** Segments where the grid crosses `level` (marching squares, linear interpolation on the cell edges), in grid units. */
export function contourSegments(values: (number | null)[], cols: number, rows: number, level: number): [number, number, number, number][] {
  const out: [number, number, number, number][] = [];
  const v = (c: number, r: number) => values[r * cols + c] ?? null;
  const cross = (a: number, b: number) => (level - a) / (b - a);
  for (let r = 0; r + 1 < rows; r++) {
    for (let c = 0; c + 1 < cols; c++) {
      const a = v(c, r), b = v(c + 1, r), d = v(c, r + 1), e = v(c + 1, r + 1);
      if (a === null || b === null || d === null || e === null) continue;
      const points: [number, number][] = [];
      if ((a < level) !== (b < level)) points.push([c + cross(a, b), r]);
      if ((b < level) !== (e < level)) points.push([c + 1, r + cross(b, e)]);
      if ((d < level) !== (e < level)) points.push([c + cross(d, e), r + 1]);
      if ((a < level) !== (d < level)) points.push([c, r + cross(a, d)]);
      if (points.length >= 2) out.push([points[0]![0], points[0]![1], points[1]![0], points[1]![1]]);
      if (points.length === 4) out.push([points[2]![0], points[2]![1], points[3]![0], points[3]![1]]);
    }
  }
  return out;
}

/** Ink (near 0) to iris (large σ_min), on a square-root scale so the region near the singularity has room. */
function colourOf(value: number, max: number): string {
  const f = Math.sqrt(Math.max(0, Math.min(1, value / max)));
  const lerp = (x: number, y: number) => Math.round(x + (y - x) * f);
  return `rgb(${lerp(11, 185)} ${lerp(14, 183)} ${lerp(20, 255)})`;
}

function drawMap(canvas: HTMLCanvasElement, map: MapResponse, contours: { level: number; colour: string; dash: number[]; map: MapResponse }[]) {
  const ctx = canvas.getContext("2d");
  if (!ctx) return;
  const cols = map.xs.length, rows = map.ys.length;
  const cw = SIZE_PX / cols, ch = SIZE_PX / rows;
  const max = Math.max(...map.values.map((x) => x ?? 0)) || 1;
  ctx.clearRect(0, 0, SIZE_PX, SIZE_PX);
  for (let r = 0; r < rows; r++) {
    for (let c = 0; c < cols; c++) {
      const value = map.values[r * cols + c];
      // Row 0 at the bottom (y grows upwards); unreachable points stay dark grey.
      ctx.fillStyle = value === null || value === undefined ? "#283040" : colourOf(value, max);
      ctx.fillRect(c * cw, SIZE_PX - (r + 1) * ch, Math.ceil(cw), Math.ceil(ch));
    }
  }
  for (const contour of contours) {
    ctx.strokeStyle = contour.colour;
    ctx.lineWidth = 2;
    ctx.setLineDash(contour.dash);
    ctx.beginPath();
    const k = contour.map;
    for (const [x0, y0, x1, y1] of contourSegments(k.values, k.xs.length, k.ys.length, contour.level)) {
      ctx.moveTo((x0 + 0.5) * cw, SIZE_PX - (y0 + 0.5) * ch);
      ctx.lineTo((x1 + 0.5) * cw, SIZE_PX - (y1 + 0.5) * ch);
    }
    ctx.stroke();
  }
  ctx.setLineDash([]);
}

/**
 * σ_min over (q4, q5) or over a Cartesian plane through the TCP of the ready pose, with the version's ε
 * (solid) and σ_stop (dotted) drawn as contours; with another tool length, the arm's own tool's contours
 * stay drawn thin and dashed, so you see how the damped and guarded regions move.
 */
export function SingularityMapPanel({ armId, version }: { armId: number; version: ProfileVersion }) {
  const [kind, setKind] = useState<MapKind>("joints");
  const [toolMm, setToolMm] = useState<number | null>(null);
  const resolution = 120;
  const toolLengthM = toolMm === null || !Number.isFinite(toolMm) ? null : toolMm / MM;
  const own = useQuery({ queryKey: [...benchKeys.all, "map", armId, kind, null], queryFn: ({ signal }) => fetchMap(requestOf(armId, kind, null, resolution), signal), staleTime: Infinity });
  const other = useQuery({
    queryKey: [...benchKeys.all, "map", armId, kind, toolLengthM],
    queryFn: ({ signal }) => fetchMap(requestOf(armId, kind, toolLengthM, resolution), signal),
    enabled: toolLengthM !== null,
    staleTime: Infinity,
  });
  const canvasRef = useRef<HTMLCanvasElement>(null);
  const damping = version.params.damping;
  const epsilon = damping.kind === "singular-value" ? damping.epsilonM : null;
  const sigmaStop = version.params.guard.sigmaStopM;
  const shown = toolLengthM !== null ? other.data : own.data;

  useEffect(() => {
    const canvas = canvasRef.current;
    if (!canvas || !shown || !own.data) return;
    const contours: { level: number; colour: string; dash: number[]; map: MapResponse }[] = [];
    const levels = [...(epsilon !== null ? [{ level: epsilon, colour: "#e6e9f0", dash: [] as number[] }] : []), { level: sigmaStop, colour: "#f5b83d", dash: [2, 3] }];
    if (toolLengthM !== null) for (const l of levels) contours.push({ ...l, dash: [6, 4], colour: "#8089a0", map: own.data });
    for (const l of levels) contours.push({ ...l, map: shown });
    drawMap(canvas, shown, contours);
    canvas.dataset.cells = String(shown.values.length);
  }, [shown, own.data, epsilon, sigmaStop, toolLengthM]);

  const axisText = (m: MapResponse, which: "x" | "y") => {
    const arr = which === "x" ? m.xs : m.ys;
    const label = which === "x" ? m.xLabel : m.yLabel;
    const scale = m.kind === "joints" ? DEG : MM;
    const unit = m.kind === "joints" ? "deg" : "mm";
    return `${label}: ${(arr[0]! * scale).toFixed(0)} … ${(arr[arr.length - 1]! * scale).toFixed(0)} ${unit}`;
  };

  return (
    <Card
      title={`Singularity map (v${version.number})`}
      description="σ_min of the Jacobian: dark where the arm loses a direction. The solid contour is the version's ε (damping starts inside), the dotted one its σ_stop (the stop-before guard holds there)."
    >
      <div className="flex flex-wrap gap-6">
        <div className="flex w-72 flex-col gap-3">
          <SelectField label="Map over" value={kind} onChange={(e) => setKind(e.target.value as MapKind)}>
            <option value="joints">The wrist joints (q4 × q5), others at the ready pose</option>
            <option value="cartesian-xz">A vertical plane (x, z) through the ready TCP</option>
            <option value="cartesian-xy">A horizontal plane (x, y) through the ready TCP</option>
            <option value="cartesian-yz">A vertical plane (y, z) through the ready TCP</option>
          </SelectField>
          <NumberField
            label="Tool length"
            unit="mm"
            min={0}
            max={1000}
            step={10}
            placeholder="the arm's own"
            hint="Along the flange's z axis, instead of the arm's own tool. Empty: the arm's own; its contours then stay drawn dashed for comparison."
            value={toolMm ?? ""}
            onChange={(e) => setToolMm(e.target.value === "" ? null : e.target.valueAsNumber)}
          />
          {shown ? (
            <p className="num text-xs text-ink-300" data-testid="map-axes">
              {axisText(shown, "x")}
              <br />
              {axisText(shown, "y")}
              <br />
              computed in {shown.computeMs.toFixed(0)} ms
            </p>
          ) : null}
        </div>
        <div className="flex flex-col gap-2">
          <QueryStatus query={toolLengthM !== null ? other : own} loading="Computing the map…" failed="Could not compute the map" />
          <canvas ref={canvasRef} width={SIZE_PX} height={SIZE_PX} className="rounded-md border border-ink-700" data-testid="singularity-map" aria-label="Singularity map" role="img" />
        </div>
      </div>
    </Card>
  );
}
