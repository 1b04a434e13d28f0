import type { ReactNode } from "react";
import type { Arm } from "@jogwright/shared";
import { Badge } from "../../../components/ui/badge.tsx";
import { angleDeg, jointSpeed, jointValue, lengthMm, type DisplayValue } from "./joint-units.ts";

const CONVENTION_TEXT = {
  standard: "Standard DH: each link is Rz(θ)·Tz(d)·Tx(a)·Rx(α); joint i turns about z of frame i−1.",
  modified: "Modified DH: each link is Rx(α)·Tx(a)·Rz(θ)·Tz(d); row i carries α and a of link i−1; joint i turns about z of frame i.",
} as const;

function Value({ value }: { value: DisplayValue | null }) {
  if (!value) return <span className="text-ink-400">—</span>;
  return (
    <>
      <span className="num">{value.text}</span> <span className="text-xs text-ink-400">{value.unit}</span>
    </>
  );
}

function Th({ children, title }: { children: ReactNode; title?: string }) {
  return (
    <th scope="col" title={title} className="border-b border-ink-700 px-3 py-2 text-right font-semibold whitespace-nowrap first:text-left">
      {children}
    </th>
  );
}

/** Translation part of a row-major 4x4 transform, in mm, and whether it also rotates. */
function describeTransform(t: readonly number[]): string {
  const [x = 0, y = 0, z = 0] = [t[3], t[7], t[11]];
  const identityRotation = [0, 5, 10].every((i) => Math.abs((t[i] ?? 0) - 1) < 1e-9) &&
    [1, 2, 4, 6, 8, 9].every((i) => Math.abs(t[i] ?? 0) < 1e-9);
  const move = `(${lengthMm(x)}, ${lengthMm(y)}, ${lengthMm(z)}) mm`;
  return identityRotation ? `offset ${move}` : `offset ${move}, rotated`;
}

export function ArmCard({ arm }: { arm: Arm }) {
  const { model } = arm;
  const headingId = `arm-${arm.id}-name`;
  return (
    <section aria-labelledby={headingId} className="rounded-lg border border-ink-700 bg-ink-850">
      <header className="flex flex-wrap items-start justify-between gap-3 border-b border-ink-700 px-5 py-4">
        <div className="flex flex-col gap-1">
          <h2 id={headingId} className="text-xl font-bold">
            {arm.name}
          </h2>
          {arm.description ? <p className="max-w-3xl text-sm text-ink-300">{arm.description}</p> : null}
        </div>
        <div className="flex gap-2">
          <Badge tone="accent">{model.joints.length} joints</Badge>
          <Badge>{model.convention === "standard" ? "standard DH" : "modified DH"}</Badge>
        </div>
      </header>
      <div className="overflow-x-auto px-2 py-2">
        <table className="w-full border-collapse text-sm">
          <caption className="px-3 pb-2 text-left text-xs text-ink-400">{CONVENTION_TEXT[model.convention]}</caption>
          <thead className="text-ink-300">
            <tr>
              <Th>Joint</Th>
              <Th title="link length">a [mm]</Th>
              <Th title="link twist">α [deg]</Th>
              <Th title="link offset">d [mm]</Th>
              <Th title="joint angle offset">θ offset [deg]</Th>
              <Th>Range</Th>
              <Th>Max speed</Th>
              <Th>Ready pose</Th>
            </tr>
          </thead>
          <tbody>
            {model.joints.map((joint, i) => {
              const ready = arm.readyPose[i];
              const hasRange = joint.min !== undefined || joint.max !== undefined;
              return (
                <tr key={i} className="border-b border-ink-700/60 last:border-b-0">
                  <th scope="row" className="px-3 py-1.5 text-left font-semibold whitespace-nowrap">
                    J{i + 1} <span className="text-xs font-normal text-ink-400">{joint.type}</span>
                  </th>
                  <td className="num px-3 py-1.5 text-right">{lengthMm(joint.a)}</td>
                  <td className="num px-3 py-1.5 text-right">{angleDeg(joint.alpha)}</td>
                  <td className="num px-3 py-1.5 text-right">{lengthMm(joint.d)}</td>
                  <td className="num px-3 py-1.5 text-right">{angleDeg(joint.theta)}</td>
                  <td className="px-3 py-1.5 text-right whitespace-nowrap">
                    {hasRange ? (
                      <>
                        <span className="num">{joint.min === undefined ? "—" : jointValue(joint, joint.min).text}</span>
                        <span className="text-ink-400"> to </span>
                        <Value value={joint.max === undefined ? null : jointValue(joint, joint.max)} />
                      </>
                    ) : (
                      <span className="text-ink-400">unlimited</span>
                    )}
                  </td>
                  <td className="px-3 py-1.5 text-right whitespace-nowrap">
                    <Value value={joint.maxSpeed === undefined ? null : jointSpeed(joint, joint.maxSpeed)} />
                  </td>
                  <td className="px-3 py-1.5 text-right whitespace-nowrap">
                    <Value value={ready === undefined ? null : jointValue(joint, ready)} />
                  </td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
      {model.base || model.tool ? (
        <dl className="flex flex-wrap gap-x-8 gap-y-1 border-t border-ink-700 px-5 py-3 text-sm">
          {model.base ? (
            <div className="flex gap-2">
              <dt className="text-ink-400">Base</dt>
              <dd className="num">{describeTransform(model.base)}</dd>
            </div>
          ) : null}
          {model.tool ? (
            <div className="flex gap-2">
              <dt className="text-ink-400">Tool (from flange)</dt>
              <dd className="num">{describeTransform(model.tool)}</dd>
            </div>
          ) : null}
        </dl>
      ) : null}
    </section>
  );
}
