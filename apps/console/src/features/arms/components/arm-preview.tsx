import { useId, useMemo, useState } from "react";
import { RotateCcw } from "lucide-react";
import { mToMm, radToDeg, type ArmJoint, type ArmModel } from "@jogwright/shared";
import { ArmView } from "../../../components/jog/arm-view.tsx";
import { StillPoseSource } from "../../../components/jog/pose-source.ts";
import { Button } from "../../../components/ui/button.tsx";
import { poseMeasures } from "../../../lib/arm-measures.ts";
import { formatFixed } from "../../../lib/format.ts";

// The arm at any joint values: the 3D view (the drive page's) with one slider per joint, and σ_min and the
// manipulability at that pose, computed here in the browser (lib/arm-measures.ts).

/** A slider's range in SI: the joint's own, else ±180° for a revolute joint and 0…500 mm for a prismatic one (display only). */
function sliderRange(j: ArmJoint): { min: number; max: number } {
  const fallback = j.type === "revolute" ? { min: -Math.PI, max: Math.PI } : { min: 0, max: 0.5 };
  return { min: j.min ?? fallback.min, max: j.max ?? fallback.max };
}

const toUi = (j: ArmJoint, si: number) => (j.type === "revolute" ? radToDeg(si) : mToMm(si));
const unitOf = (j: ArmJoint) => (j.type === "revolute" ? "deg" : "mm");

/** Manipulability with its unit: m³ for six or more revolute joints (three length rows of J), else a plain number (mixed units). */
function manipulabilityText(model: ArmModel, w: number): string {
  const isMetric = model.joints.length >= 6 && model.joints.every((j) => j.type === "revolute");
  const text = w === 0 ? "0" : Math.abs(w) >= 0.01 ? formatFixed(w, 4) : w.toExponential(3);
  return isMetric ? `${text} m³` : text;
}

export function ArmPreview({ model, startPose, title = "Preview" }: { model: ArmModel; startPose: readonly number[]; title?: string }) {
  const n = model.joints.length;
  const start = useMemo(() => Array.from({ length: n }, (_, i) => startPose[i] ?? 0), [n, startPose]);
  const [q, setQ] = useState<number[]>(start);
  const [source] = useState(() => new StillPoseSource(start));
  const measures = useMemo(() => poseMeasures(model, q), [model, q]);
  const headingId = useId();

  const move = (next: number[]) => {
    setQ(next);
    source.setPose(next);
  };

  return (
    <section aria-labelledby={headingId} className="grid gap-4 lg:grid-cols-[minmax(0,3fr)_minmax(18rem,2fr)]" data-testid="arm-preview">
      <ArmView arm={model} restPose={start} source={source} className="relative h-[24rem] overflow-hidden rounded-lg border border-ink-700 bg-ink-950" />
      <div className="flex flex-col gap-3">
        <div className="flex items-center justify-between gap-2">
          <h3 id={headingId} className="text-base font-bold">
            {title}
          </h3>
          <Button size="sm" variant="ghost" onClick={() => move(start)}>
            <RotateCcw aria-hidden className="size-3.5" /> Back to start
          </Button>
        </div>
        <dl className="grid grid-cols-2 gap-2 rounded-md border border-ink-700 bg-ink-900 p-3 text-sm">
          <div>
            <dt className="text-ink-300" title="smallest singular value of the 6×n geometric Jacobian">σ_min</dt>
            <dd className="num text-lg" data-testid="preview-sigma-min" data-value={measures.sigmaMin}>
              {formatFixed(mToMm(measures.sigmaMin), 1)} <span className="text-xs text-ink-400">mm</span>
            </dd>
          </div>
          <div>
            <dt className="text-ink-300" title="Yoshikawa's √det(J Jᵀ); below six joints the product of the singular values">Manipulability</dt>
            <dd className="num text-lg" data-testid="preview-manipulability">
              {manipulabilityText(model, measures.manipulability)}
            </dd>
          </div>
        </dl>
        <div className="flex max-h-[17rem] flex-col gap-2 overflow-y-auto pr-1">
          {model.joints.map((j, i) => {
            const range = sliderRange(j);
            const step = j.type === "revolute" ? Math.PI / 360 : 0.001;
            return (
              <label key={i} className="grid grid-cols-[2.5rem_minmax(0,1fr)_5.5rem] items-center gap-2 text-sm">
                <span className="font-semibold">J{i + 1}</span>
                <input
                  type="range"
                  min={range.min}
                  max={range.max}
                  step={step}
                  value={q[i] ?? 0}
                  onChange={(e) => move(q.map((v, k) => (k === i ? Number(e.target.value) : v)))}
                  aria-label={`Joint ${i + 1} in ${unitOf(j)}`}
                  aria-valuetext={`${formatFixed(toUi(j, q[i] ?? 0), 1)} ${unitOf(j)}`}
                  className="accent-iris-400"
                  data-testid={`preview-joint-${i + 1}`}
                />
                <span className="num text-right">
                  {formatFixed(toUi(j, q[i] ?? 0), 1)} <span className="text-xs text-ink-400">{unitOf(j)}</span>
                </span>
              </label>
            );
          })}
        </div>
      </div>
    </section>
  );
}
