import { DAMPING_KINDS, GUARD_POLICY_LABELS, type DampingSchemeParams, type GuardPolicy, type ProfileParams } from "./profile.ts";
import { DEG_PER_RAD } from "./units.ts";

/**
 * What the console and the version diff need to know about every profile parameter: a label, the SI unit
 * it is stored in, the unit people read and type (UI unit), the conversion between the two and how many
 * decimals are meaningful in the UI unit. Stored values stay SI (PRODUCT.md, "Conventions"); the UI
 * units are deg, deg/s, mm/s, mm/s², deg/s², ms, %, mm for distances and for σ, ε and λ (the drive page
 * and the bench show them in mm too: one unit everywhere, issue 13 item 12), m³ for the manipulability w0.
 *
 * `uiKey` names the value in its UI unit (a flat, unit-carrying name for form state), `path` is the
 * dotted path of the SI value inside ProfileParams, the same path the server's issues and
 * checkCeilings' violations use.
 */

export const PROFILE_FIELD_GROUPS = ["Damping", "Speed caps", "Joint limits", "Singularity guard", "Input", "Override", "Loop", "Redundancy"] as const;
export type ProfileFieldGroup = (typeof PROFILE_FIELD_GROUPS)[number];

export interface UnitConversion {
  siUnit: string;
  uiUnit: string;
  toUi: (si: number) => number;
  toSi: (ui: number) => number;
}

const same = (unit: string): UnitConversion => ({ siUnit: unit, uiUnit: unit, toUi: (v) => v, toSi: (v) => v });
const scaled = (siUnit: string, uiUnit: string, factor: number): UnitConversion => ({
  siUnit,
  uiUnit,
  toUi: (si) => si * factor,
  toSi: (ui) => ui / factor,
});

/** The conversions in use, by name. */
export const UNITS = {
  radToDeg: scaled("rad", "deg", DEG_PER_RAD),
  radPerSToDegPerS: scaled("rad/s", "deg/s", DEG_PER_RAD),
  radPerS2ToDegPerS2: scaled("rad/s²", "deg/s²", DEG_PER_RAD),
  mPerSToMmPerS: scaled("m/s", "mm/s", 1000),
  mPerS2ToMmPerS2: scaled("m/s²", "mm/s²", 1000),
  metresToMm: scaled("m", "mm", 1000),
  fractionToPercent: scaled("1", "%", 100),
  metres: same("m"),
  cubicMetres: same("m³"),
  milliseconds: same("ms"),
  percent: same("%"),
  hertz: same("Hz"),
  perSecond: same("1/s"),
  unitless: same("—"),
} as const satisfies Record<string, UnitConversion>;

export interface NumericProfileField extends UnitConversion {
  kind: "number";
  path: string;
  uiKey: string;
  label: string;
  group: ProfileFieldGroup;
  /** Decimals worth showing in the UI unit; the diff compares values rounded to these. */
  decimals: number;
  /** Only present under this damping scheme. */
  dampingKind?: DampingSchemeParams["kind"];
  hint?: string;
}

const num = (
  path: string,
  uiKey: string,
  label: string,
  unit: UnitConversion,
  decimals: number,
  extra: Partial<Pick<NumericProfileField, "dampingKind" | "hint">> = {},
): Omit<NumericProfileField, "group"> => ({ kind: "number", path, uiKey, label, decimals, ...unit, ...extra });

/** The fields of one form group, in form order, each marked with the group. */
const inGroup = (group: ProfileFieldGroup, fields: readonly Omit<NumericProfileField, "group">[]): NumericProfileField[] =>
  fields.map((field) => ({ ...field, group }));

/** Every scalar numeric parameter (the per-joint caps are JOINT_RATE_CAP_FIELD below), in form order: PROFILE_FIELD_GROUPS' order. */
export const NUMERIC_PROFILE_FIELDS: readonly NumericProfileField[] = [
  ...inGroup("Damping", [
    num("damping.lambdaM", "lambdaMm", "Damping λ", UNITS.metresToMm, 1, { dampingKind: "fixed" }),
    num("damping.epsilonM", "epsilonMm", "Damped region ε (σ_min below)", UNITS.metresToMm, 1, { dampingKind: "singular-value" }),
    num("damping.lambdaMaxM", "lambdaMaxMm", "Damping at the singularity λmax", UNITS.metresToMm, 1, { dampingKind: "singular-value" }),
    num("damping.w0M3", "w0M3", "Damped region w0 (w below)", UNITS.cubicMetres, 6, { dampingKind: "manipulability" }),
    num("damping.lambda0M", "lambda0Mm", "Damping at the singularity λ0", UNITS.metresToMm, 1, { dampingKind: "manipulability" }),
  ]),
  ...inGroup("Speed caps", [
    num("tcpLinearCapMPerS", "tcpLinearCapMmPerS", "TCP linear cap", UNITS.mPerSToMmPerS, 1),
    num("tcpAngularCapRadPerS", "tcpAngularCapDegPerS", "TCP angular cap", UNITS.radPerSToDegPerS, 2),
    num("jointAccelFraction", "jointAccelPercent", "Joint acceleration, of rated", UNITS.fractionToPercent, 0, {
      hint: "Of each joint's rated acceleration; the whole change of joint rates is scaled by one factor.",
    }),
  ]),
  ...inGroup("Joint limits", [
    num("jointLimitMarginRad", "jointLimitMarginDeg", "Joint-limit margin", UNITS.radToDeg, 2, { hint: "Stand-off from each limit that motion never enters." }),
    num("jointLimitSlowZoneRad", "jointLimitSlowZoneDeg", "Slow-down zone", UNITS.radToDeg, 2, {
      hint: "Width of the zone before the stand-off where joints slow down.",
    }),
  ]),
  ...inGroup("Singularity guard", [
    num("guard.sigmaStopM", "sigmaStopMm", "Guard threshold σ", UNITS.metresToMm, 1, { hint: "Stop-before holds when σ_min would fall below this." }),
  ]),
  ...inGroup("Input", [
    num("watchdogMs", "watchdogMs", "Input watchdog", UNITS.milliseconds, 0, { hint: "No input for this long → controlled stop." }),
    num("shaping.deadband", "deadbandPercent", "Stick deadband", UNITS.fractionToPercent, 1, { hint: "Of full deflection, rescaled; 5–15 % is common." }),
    num("shaping.expo", "expo", "Expo", UNITS.unitless, 2, { hint: "0 linear … 1 cubic." }),
    num("shaping.linearAccelMPerS2", "linearAccelMmPerS2", "Linear acceleration limit", UNITS.mPerS2ToMmPerS2, 0),
    num("shaping.angularAccelRadPerS2", "angularAccelDegPerS2", "Angular acceleration limit", UNITS.radPerS2ToDegPerS2, 1),
  ]),
  ...inGroup("Override", [
    num("speedOverride.defaultPercent", "overrideDefaultPercent", "Default override", UNITS.percent, 0),
    num("speedOverride.maxPercent", "overrideMaxPercent", "Maximum override", UNITS.percent, 0),
  ]),
  ...inGroup("Loop", [
    num("tickRateHz", "tickRateHz", "Tick rate", UNITS.hertz, 0),
    num("driftCorrectionGainPerS", "driftCorrectionGainPerS", "Drift-correction gain K", UNITS.perSecond, 2, {
      hint: "0 = off; K·dt ≤ 1 (above 1 the discrete loop overshoots).",
    }),
    num("driftReanchorM", "driftReanchorMm", "Drift re-anchor distance", UNITS.metresToMm, 1, {
      hint: "A larger error than this re-anchors the reference pose instead of pulling back to it.",
    }),
  ]),
  ...inGroup("Redundancy", [
    num("nullSpace.gainPerS", "nullSpaceGainPerS", "Null-space gain", UNITS.perSecond, 2, {
      hint: "Arms with more than six joints: how strongly spare motion keeps joints away from their limits (Liégeois 1977).",
    }),
  ]),
];

/** The per-joint rate caps: path `jointRateCapsRadPerS.<i>`, UI `jointRateCapsDegPerS.<i>` (revolute joints). */
export const JOINT_RATE_CAP_FIELD = {
  path: "jointRateCapsRadPerS",
  uiKey: "jointRateCapsDegPerS",
  group: "Speed caps" as ProfileFieldGroup,
  decimals: 2,
  /** Revolute joints; a prismatic joint's cap is m/s shown as mm/s. */
  revolute: UNITS.radPerSToDegPerS,
  prismatic: UNITS.mPerSToMmPerS,
  label: (index: number) => `Joint ${index + 1} rate cap`,
} as const;

export const DAMPING_KIND_LABELS: Record<DampingSchemeParams["kind"], string> = {
  fixed: "Fixed λ",
  "singular-value": "Singular-value schedule",
  manipulability: "Manipulability schedule",
};

/** Values for the damping fields of the schemes a profile does not use (so switching scheme starts sensibly), by SI path. */
export const DAMPING_FIELD_DEFAULTS_SI: Readonly<Record<string, number>> = {
  "damping.lambdaM": 0.02,
  "damping.epsilonM": 0.04,
  "damping.lambdaMaxM": 0.04,
  "damping.w0M3": 0.002,
  "damping.lambda0M": 0.04,
};

/** The values of a profile in UI units, flat and named by their unit; the console's form state. */
export interface ProfileUiValues {
  dampingKind: DampingSchemeParams["kind"];
  dampSmallestOnly: boolean;
  nullSpaceEnabled: boolean;
  guardPolicy: GuardPolicy;
  jointRateCapsDegPerS: number[];
  [numericUiKey: string]: number | number[] | string | boolean;
}

export type JointKind = "revolute" | "prismatic";

/** Rounds to `decimals` places, without turning −0 into a visible sign. */
export function roundTo(value: number, decimals: number): number {
  if (!Number.isFinite(value)) return value;
  const f = 10 ** decimals;
  const r = Math.round(value * f) / f;
  return r === 0 ? 0 : r;
}

function getPath(source: unknown, path: string): unknown {
  let at: unknown = source;
  for (const part of path.split(".")) {
    if (at === null || typeof at !== "object") return undefined;
    at = (at as Record<string, unknown>)[part];
  }
  return at;
}

function setPath(target: Record<string, unknown>, path: string, value: unknown): void {
  const parts = path.split(".");
  let at = target;
  for (const part of parts.slice(0, -1)) {
    at[part] ??= {};
    at = at[part] as Record<string, unknown>;
  }
  at[parts[parts.length - 1]!] = value;
}

const jointUnit = (kinds: readonly JointKind[] | undefined, i: number): UnitConversion =>
  kinds?.[i] === "prismatic" ? JOINT_RATE_CAP_FIELD.prismatic : JOINT_RATE_CAP_FIELD.revolute;

/** SI parameters → UI values, rounded to each field's decimals. Damping fields of other schemes get defaults. */
export function profileParamsToUi(params: ProfileParams, jointKinds?: readonly JointKind[]): ProfileUiValues {
  const ui: ProfileUiValues = {
    dampingKind: params.damping.kind,
    dampSmallestOnly: params.dampSmallestOnly,
    nullSpaceEnabled: params.nullSpace.enabled,
    guardPolicy: params.guard.policy,
    jointRateCapsDegPerS: params.jointRateCapsRadPerS.map((v, i) => roundTo(jointUnit(jointKinds, i).toUi(v), JOINT_RATE_CAP_FIELD.decimals)),
  };
  for (const field of NUMERIC_PROFILE_FIELDS) {
    const si = getPath(params, field.path);
    const value = typeof si === "number" ? si : DAMPING_FIELD_DEFAULTS_SI[field.path];
    ui[field.uiKey] = roundTo(field.toUi(value ?? Number.NaN), field.decimals);
  }
  return ui;
}

/**
 * UI values → a candidate SI parameter object, not yet validated: pass it to profileParamsSchema. Only
 * the damping fields of the chosen scheme are carried.
 */
export function profileParamsFromUi(ui: ProfileUiValues, jointKinds?: readonly JointKind[]): Record<string, unknown> {
  const out: Record<string, unknown> = {
    damping: { kind: ui.dampingKind },
    dampSmallestOnly: ui.dampSmallestOnly,
    nullSpace: { enabled: ui.nullSpaceEnabled },
    guard: { policy: ui.guardPolicy },
    jointRateCapsRadPerS: ui.jointRateCapsDegPerS.map((v, i) => jointUnit(jointKinds, i).toSi(Number(v))),
  };
  for (const field of NUMERIC_PROFILE_FIELDS) {
    if (field.dampingKind && field.dampingKind !== ui.dampingKind) continue;
    setPath(out, field.path, field.toSi(Number(ui[field.uiKey])));
  }
  return out;
}

/** The UI key for a profile path ("jointRateCapsRadPerS.2" → "jointRateCapsDegPerS.2"), or undefined. */
export function uiKeyForProfilePath(path: string): string | undefined {
  if (path === "damping.kind") return "dampingKind";
  if (path === "guard.policy") return "guardPolicy";
  if (path === "dampSmallestOnly") return "dampSmallestOnly";
  if (path === "nullSpace.enabled") return "nullSpaceEnabled";
  if (path === JOINT_RATE_CAP_FIELD.path) return JOINT_RATE_CAP_FIELD.uiKey;
  if (path.startsWith(`${JOINT_RATE_CAP_FIELD.path}.`)) return `${JOINT_RATE_CAP_FIELD.uiKey}.${path.slice(JOINT_RATE_CAP_FIELD.path.length + 1)}`;
  return NUMERIC_PROFILE_FIELDS.find((f) => f.path === path)?.uiKey;
}

/** A label for a profile path, e.g. "tcpLinearCapMPerS" → "TCP linear cap"; the path itself if unknown. */
export function labelForProfilePath(path: string): string {
  if (path === "damping.kind") return "Damping scheme";
  if (path === "guard.policy") return "Guard policy";
  if (path === "dampSmallestOnly") return "Numerical filtering";
  if (path === "nullSpace.enabled") return "Null-space term";
  const joint = new RegExp(`^${JOINT_RATE_CAP_FIELD.path}\\.(\\d+)$`).exec(path);
  if (joint) return JOINT_RATE_CAP_FIELD.label(Number(joint[1]));
  return NUMERIC_PROFILE_FIELDS.find((f) => f.path === path)?.label ?? path;
}

export type DiffValue = number | string | boolean | null;

export interface ProfileParamDiffRow {
  /** Dotted SI path, as in ProfileParams. */
  field: string;
  label: string;
  group: ProfileFieldGroup;
  uiUnit: string;
  /** In the UI unit, rounded to the field's decimals; null when the field does not exist on that side. */
  before: DiffValue;
  after: DiffValue;
  changed: boolean;
}

/**
 * Field-by-field difference of two parameter sets, every numeric value in its UI unit. Numbers count as
 * changed when they differ at the field's UI precision (so a value that only went through a deg ↔ rad
 * round trip is not reported). Damping fields of a scheme only one side uses show null on the other.
 */
export function diffProfileParams(a: ProfileParams, b: ProfileParams, jointKinds?: readonly JointKind[]): ProfileParamDiffRow[] {
  const rows: ProfileParamDiffRow[] = [];
  const push = (field: string, label: string, group: ProfileFieldGroup, uiUnit: string, before: DiffValue, after: DiffValue) =>
    rows.push({ field, label, group, uiUnit, before, after, changed: before !== after });

  push("damping.kind", "Damping scheme", "Damping", "—", DAMPING_KIND_LABELS[a.damping.kind], DAMPING_KIND_LABELS[b.damping.kind]);
  for (const kind of DAMPING_KINDS) {
    for (const field of NUMERIC_PROFILE_FIELDS.filter((f) => f.dampingKind === kind)) {
      if (a.damping.kind !== kind && b.damping.kind !== kind) continue;
      push(field.path, field.label, field.group, field.uiUnit, uiNumber(a, field), uiNumber(b, field));
    }
  }
  push("dampSmallestOnly", "Numerical filtering", "Damping", "—", a.dampSmallestOnly, b.dampSmallestOnly);

  const joints = Math.max(a.jointRateCapsRadPerS.length, b.jointRateCapsRadPerS.length);
  for (let i = 0; i < joints; i++) {
    const unit = jointUnit(jointKinds, i);
    const side = (p: ProfileParams) => {
      const v = p.jointRateCapsRadPerS[i];
      return v === undefined ? null : roundTo(unit.toUi(v), JOINT_RATE_CAP_FIELD.decimals);
    };
    push(`${JOINT_RATE_CAP_FIELD.path}.${i}`, JOINT_RATE_CAP_FIELD.label(i), JOINT_RATE_CAP_FIELD.group, unit.uiUnit, side(a), side(b));
  }
  for (const field of NUMERIC_PROFILE_FIELDS) {
    if (field.dampingKind) continue;
    if (field.path === "guard.sigmaStopM") {
      push("guard.policy", "Guard policy", "Singularity guard", "—", GUARD_POLICY_LABELS[a.guard.policy], GUARD_POLICY_LABELS[b.guard.policy]);
    }
    if (field.path === "nullSpace.gainPerS") push("nullSpace.enabled", "Null-space term", "Redundancy", "—", a.nullSpace.enabled, b.nullSpace.enabled);
    push(field.path, field.label, field.group, field.uiUnit, uiNumber(a, field), uiNumber(b, field));
  }
  // Keep the form's group order: Damping, Speed caps, Joint limits, Singularity guard, Input, Override, Loop, Redundancy.
  return rows
    .map((row, order) => ({ row, order }))
    .sort((x, y) => PROFILE_FIELD_GROUPS.indexOf(x.row.group) - PROFILE_FIELD_GROUPS.indexOf(y.row.group) || x.order - y.order)
    .map(({ row }) => row);
}

function uiNumber(params: ProfileParams, field: NumericProfileField): number | null {
  const si = getPath(params, field.path);
  return typeof si === "number" ? roundTo(field.toUi(si), field.decimals) : null;
}
