import type { ArmModel } from "@jogwright/kinematics";
import type { TrialDefinition } from "@jogwright/shared";
import { createRequire } from "node:module";
import type { EvalFunction, MathJsInstance, MathNode, Unit } from "mathjs";
import type { CompiledSegment, CompiledTrial } from "./runner.ts";

/**
 * Trial definitions → what the runner executes. Twist expressions are parsed and checked with mathjs (units
 * allowed) and sampled here, once, before a run: the run's hot loop never calls mathjs.
 *
 * The mathjs instance is restricted (mathjs' own security advice): only numbers, units and the functions
 * below; `t` is the time since the segment began, a quantity in seconds, so `sin(2 pi t / 4 s)` works and
 * `sin(t)` is refused with a sentence (the sine of a time has no meaning).
 */

export interface TrialIssue {
  path: string;
  message: string;
}

export class TrialInvalidError extends Error {
  constructor(readonly issues: TrialIssue[]) {
    super(issues[0]?.message ?? "the trial is not valid");
  }
}

/**
 * mathjs is loaded on first use (a trial with expression segments), not when the server starts: it takes
 * 1–2.5 s to load on the 2-core machine, and built-in trials, the review's evidence and every thread of the
 * trial pool that never meets an expression do without it. Synchronous (require of its CommonJS build), so
 * checking and compiling stay synchronous.
 */
interface Mathjs {
  math: MathJsInstance;
  LINEAR: Unit;
  ANGULAR: Unit;
  PER_SECOND: Unit;
}
let loaded: Mathjs | null = null;
function mathjs(): Mathjs {
  if (!loaded) {
    const { all, create } = createRequire(import.meta.url)("mathjs") as typeof import("mathjs");
    const math = create(all!);
    loaded = { math, LINEAR: math.unit("m/s"), ANGULAR: math.unit("rad/s"), PER_SECOND: math.unit("1/s") };
  }
  return loaded;
}
const ALLOWED_FUNCTIONS = new Set([
  "sin", "cos", "tan", "asin", "acos", "atan", "atan2", "sinh", "cosh", "tanh", "sqrt", "abs", "exp", "log",
  "min", "max", "sign", "pow", "floor", "ceil", "round", "mod", "unaryMinus", "unaryPlus",
]);
const ALLOWED_CONSTANTS = new Set(["t", "pi", "e", "tau"]);
const AXES = ["x", "y", "z"] as const;

/** The segment's field names as a person reads them: "segment 2, linear y". */
function fieldName(segment: number, part: "linear" | "angular", axis: number): string {
  return `segment ${segment + 1}, ${part} ${AXES[axis]}`;
}

interface ParsedExpression {
  compiled: EvalFunction;
  usesTime: boolean;
}

/** Parses one expression and checks its symbols and functions; throws a sentence. */
function parseExpression(text: string): ParsedExpression {
  const { math } = mathjs();
  let node: MathNode;
  try {
    node = math.parse(text);
  } catch (e) {
    throw new Error(`cannot be read: ${(e as Error).message}`);
  }
  let usesTime = false;
  node.traverse((n, _path, parent) => {
    if (n.type === "FunctionNode") {
      const name = (n as unknown as { fn: { name?: string } }).fn.name ?? "";
      if (!ALLOWED_FUNCTIONS.has(name)) throw new Error(`uses "${name}", which is not allowed here`);
    } else if (n.type === "SymbolNode") {
      const name = (n as unknown as { name: string }).name;
      const isCallee = parent?.type === "FunctionNode" && (parent as unknown as { fn: MathNode }).fn === n;
      if (isCallee) return;
      if (name === "t") usesTime = true;
      if (!ALLOWED_CONSTANTS.has(name) && !math.Unit.isValuelessUnit(name)) throw new Error(`uses "${name}", which is neither t, a constant nor a unit`);
    } else if (!["ConstantNode", "OperatorNode", "ParenthesisNode"].includes(n.type)) {
      throw new Error(`uses a ${n.type.replace(/Node$/, "").toLowerCase()}, which is not allowed here`);
    }
  });
  return { compiled: node.compile(), usesTime };
}

/** Evaluates at time t [s] into SI (m/s or rad/s); throws a sentence. */
function evaluateSI(p: ParsedExpression, t: number, part: "linear" | "angular"): number {
  const { math, LINEAR, ANGULAR, PER_SECOND } = mathjs();
  let value: unknown;
  try {
    value = p.compiled.evaluate({ t: math.unit(t, "s") });
  } catch (e) {
    const message = (e as Error).message;
    if (/Unexpected type of argument|Units do not match|dimensionless|is no angle/i.test(message)) {
      throw new Error(`mixes units that do not fit (${message}); t is a time in seconds, e.g. sin(2 pi t / 4 s)`);
    }
    throw new Error(`cannot be evaluated: ${message}`);
  }
  let si: number;
  if (typeof value === "number") si = value;
  else if (math.isUnit(value)) {
    const u = value as Unit;
    if (part === "linear") {
      if (!u.equalBase(LINEAR)) throw new Error(`gives ${u.toString()}, not a speed (m/s)`);
      si = u.toNumber("m/s");
    } else if (u.equalBase(ANGULAR)) si = u.toNumber("rad/s");
    else if (u.equalBase(PER_SECOND)) si = (math.multiply(math.unit("1 rad"), u) as Unit).toNumber("rad/s");
    else throw new Error(`gives ${u.toString()}, not an angular speed (rad/s)`);
  } else {
    throw new Error("does not give a number");
  }
  if (!Number.isFinite(si)) throw new Error(`is not finite at t = ${t.toFixed(3)} s`);
  return si;
}

/** Every problem of a trial for an arm, each with its field: [] when it can be run. */
export function checkTrial(def: TrialDefinition, arm: ArmModel): TrialIssue[] {
  const issues: TrialIssue[] = [];
  const n = arm.joints.length;
  if (def.startPose.length !== n) {
    issues.push({ path: "startPose", message: `the start pose needs ${n} joint positions for this arm, got ${def.startPose.length}` });
  } else {
    def.startPose.forEach((q, i) => {
      const j = arm.joints[i]!;
      if (q < (j.min ?? -Infinity) || q > (j.max ?? Infinity)) issues.push({ path: `startPose.${i}`, message: `joint ${i + 1} starts outside its limits` });
    });
  }
  def.segments.forEach((seg, s) => {
    if (seg.kind !== "expression") return;
    for (const part of ["linear", "angular"] as const) {
      seg[part].forEach((text, axis) => {
        try {
          const p = parseExpression(text);
          // Evaluated at the start, the middle and the end: units and finiteness are checked before saving.
          for (const t of [0, seg.durationS / 2, seg.durationS]) evaluateSI(p, t, part);
        } catch (e) {
          issues.push({ path: `segments.${s}.${part}.${axis}`, message: `${fieldName(s, part, axis)}: ${(e as Error).message}` });
        }
      });
    }
  });
  return issues;
}

/** A checked trial → segments in ticks, expressions sampled at every tick. Throws TrialInvalidError. */
export function compileTrial(def: TrialDefinition, arm: ArmModel, tickRateHz: number): CompiledTrial {
  const issues = checkTrial(def, arm);
  if (issues.length > 0) throw new TrialInvalidError(issues);
  const dt = 1 / tickRateHz;
  const segments: CompiledSegment[] = def.segments.map((seg, s): CompiledSegment => {
    if (seg.kind === "twist") {
      return { kind: "twist", frame: seg.frame, twist: Float64Array.from([...seg.linearMPerS, ...seg.angularRadPerS]), ticks: Math.max(1, Math.round(seg.durationS / dt)) };
    }
    if (seg.kind === "waypoint") {
      return { kind: "waypoint", position: Float64Array.from(seg.positionM), speed: seg.speedMPerS, maxTicks: Math.max(1, Math.round(seg.timeoutS / dt)) };
    }
    const ticks = Math.max(1, Math.round(seg.durationS / dt));
    const samples = new Float64Array(ticks * 6);
    const parts = [...seg.linear.map((x) => ["linear", x] as const), ...seg.angular.map((x) => ["angular", x] as const)];
    parts.forEach(([part, text], c) => {
      const p = parseExpression(text);
      try {
        if (!p.usesTime) {
          const v = evaluateSI(p, 0, part);
          for (let k = 0; k < ticks; k++) samples[k * 6 + c] = v;
        } else {
          for (let k = 0; k < ticks; k++) samples[k * 6 + c] = evaluateSI(p, k * dt, part);
        }
      } catch (e) {
        throw new TrialInvalidError([{ path: `segments.${s}.${part}.${c % 3}`, message: `${fieldName(s, part, c % 3)}: ${(e as Error).message}` }]);
      }
    });
    return { kind: "samples", frame: seg.frame, samples, ticks };
  });
  return { startPose: Float64Array.from(def.startPose), segments };
}
