import { parse as parseCsv } from "csv-parse/sync";
import { geometricJacobian, manipulability, singularValues } from "@jogwright/kinematics";
import { armModelSchema, type ArmModel, type ArmUploadFormat, type ArmUploadIssue, type ArmUploadPreview } from "@jogwright/shared";

/**
 * Reading an uploaded arm (issue 12, "Upload"): the arm JSON of PRODUCT.md, or a CSV DH table. Pure: text
 * in, an SI arm model or every problem with its line (1-based) and field out. The format is told by the
 * content (a JSON file starts with `{` after an optional BOM and white space), never by the file name or
 * MIME type.
 *
 * CSV DH table (docs: DEVELOPERS.md "Arm uploads"):
 *   # convention: standard            ← required directive line(s) before the header, `#` first
 *   # tool_mm: 1,0,0,0, 0,1,0,0, 0,0,1,160, 0,0,0,1   ← optional, 16 numbers row-major; base_m/base_mm too
 *   type,a_mm,alpha_deg,d_mm,theta_deg,min_deg,max_deg,speed_deg_s,accel_deg_s2
 *   revolute,75,-90,445,0,-170,170,150,600
 * Units are part of each column name: lengths mm or m, angles deg or rad, speeds …_s, accelerations …_s2.
 * Range, speed and acceleration columns apply by kind: an angle column (min_deg, speed_rad_s, …) to
 * revolute joints, a length column (min_mm, speed_m_s, …) to prismatic joints; both kinds may be present.
 * An optional `joint` column numbers the rows 1, 2, …. Empty cells of the optional columns mean "not given".
 */

export type ArmUploadResult =
  | { ok: true; format: ArmUploadFormat; model: ArmModel }
  | { ok: false; format: ArmUploadFormat; issues: ArmUploadIssue[] };

export const MAX_JOINTS = 12;
const DEG = Math.PI / 180;

export function parseArmUpload(input: Buffer | string): ArmUploadResult {
  const text = (typeof input === "string" ? input : input.toString("utf8")).replace(/^\uFEFF/, "");
  return /^\s*[{[]/.test(text) ? parseArmJson(text) : parseArmCsv(text);
}

/** σ_min and manipulability of the 6×n geometric Jacobian at the zero pose (the preview before saving). */
export function previewArm(format: ArmUploadFormat, model: ArmModel): ArmUploadPreview {
  const n = model.joints.length;
  const J = geometricJacobian(model, new Float64Array(n));
  const sigma = singularValues(J, 6, n);
  // Yoshikawa's √det(J Jᵀ) for n ≥ 6; below six joints J Jᵀ is singular by rank, so the product of the n
  // singular values (= √det(Jᵀ J)) says how far from singular the arm's own motions are (derived).
  const w = n >= 6 ? manipulability(J, 6, n) : sigma.reduce((p, s) => p * s, 1);
  return { format, model, sigmaMinAtZero: sigma[sigma.length - 1]!, manipulabilityAtZero: w };
}

/**
 * Why a 4×4 row-major matrix is not a rigid transform, or null: last row 0 0 0 1, a rotation block with
 * RᵀR = I and det R = +1 (a reflection is not a pose). Tolerance 1e-6, loose enough for values typed with
 * six decimals (common practice, no source).
 */
export function rigidTransformProblem(m: readonly number[]): string | null {
  const tol = 1e-6;
  if (Math.abs(m[12]!) > tol || Math.abs(m[13]!) > tol || Math.abs(m[14]!) > tol || Math.abs(m[15]! - 1) > tol) {
    return "its last row must be 0 0 0 1";
  }
  for (let i = 0; i < 3; i++) {
    for (let j = 0; j < 3; j++) {
      let dot = 0;
      for (let k = 0; k < 3; k++) dot += m[4 * k + i]! * m[4 * k + j]!;
      if (Math.abs(dot - (i === j ? 1 : 0)) > tol) return "its rotation part is not orthonormal (RᵀR ≠ I): it scales or shears";
    }
  }
  const det =
    m[0]! * (m[5]! * m[10]! - m[6]! * m[9]!) - m[1]! * (m[4]! * m[10]! - m[6]! * m[8]!) + m[2]! * (m[4]! * m[9]! - m[5]! * m[8]!);
  if (det < 0) return "its rotation part is a reflection (det R = −1)";
  return null;
}

// ---------------------------------------------------------------------------------------------- JSON

const ARM_KEYS = new Set(["convention", "joints", "base", "tool"]);
const JOINT_KEYS = new Set(["type", "a", "alpha", "d", "theta", "min", "max", "maxSpeed", "maxAccel"]);

function parseArmJson(text: string): ArmUploadResult {
  let value: unknown;
  let lines: Map<string, number>;
  try {
    lines = locateJsonPaths(text);
    value = JSON.parse(text);
  } catch (e) {
    const line = e instanceof JsonSyntaxError ? e.line : null;
    return { ok: false, format: "json", issues: [{ line, field: "file", message: `not valid JSON: ${(e as Error).message}` }] };
  }
  const lineOf = (path: (string | number)[]): number | null => {
    for (let k = path.length; k >= 0; k--) {
      const found = lines.get(path.slice(0, k).join("."));
      if (found !== undefined) return found;
    }
    return null;
  };
  const issues: ArmUploadIssue[] = [];
  const add = (path: (string | number)[], message: string) => issues.push({ line: lineOf(path), field: path.join(".") || "file", message });

  if (value === null || typeof value !== "object" || Array.isArray(value)) {
    add([], "an arm is one JSON object { convention, joints, base?, tool? }");
    return { ok: false, format: "json", issues };
  }
  for (const key of Object.keys(value)) if (!ARM_KEYS.has(key)) add([key], `unknown field "${key}" (an arm has convention, joints, base, tool)`);
  const joints = (value as { joints?: unknown }).joints;
  if (Array.isArray(joints)) {
    joints.forEach((j, i) => {
      if (j && typeof j === "object" && !Array.isArray(j)) {
        for (const key of Object.keys(j)) if (!JOINT_KEYS.has(key)) add(["joints", i, key], `unknown field "${key}" on joint ${i + 1} (SI units: a, alpha, d, theta, min, max, maxSpeed, maxAccel)`);
      }
    });
  }
  const parsed = armModelSchema.safeParse(value);
  if (!parsed.success) {
    for (const issue of parsed.error.issues) add(issue.path as (string | number)[], jointWords(issue.path as (string | number)[], issue.message));
  } else {
    for (const key of ["base", "tool"] as const) {
      const m = parsed.data[key];
      const problem = m && rigidTransformProblem(m);
      if (problem) add([key], `the ${key} is not a rigid transform: ${problem}`);
    }
  }
  if (issues.length) return { ok: false, format: "json", issues: sortIssues(issues) };
  return { ok: true, format: "json", model: parsed.data! };
}

function jointWords(path: (string | number)[], message: string): string {
  return path[0] === "joints" && typeof path[1] === "number" ? `joint ${path[1] + 1}: ${message}` : message;
}

class JsonSyntaxError extends Error {
  constructor(readonly line: number, message: string) {
    super(message);
  }
}

/**
 * The line each value of a JSON text starts on (an object member's: its key's line), by dotted path
 * ("joints.2.min"), or a JsonSyntaxError at the line of the first thing that is not JSON (JSON.parse's own
 * message gives no position for every error). Strings cannot hold a raw line break in JSON, so line
 * breaks are counted in white space only. Values themselves come from JSON.parse afterwards.
 */
function locateJsonPaths(text: string): Map<string, number> {
  const lines = new Map<string, number>();
  let i = 0;
  let line = 1;
  const fail = (what: string): never => {
    throw new JsonSyntaxError(line, i >= text.length ? `the file ends where ${what} was expected` : `${what} expected, found "${text[i]}"`);
  };
  const skipSpace = () => {
    while (i < text.length && (text[i] === " " || text[i] === "\t" || text[i] === "\r" || text[i] === "\n")) {
      if (text[i] === "\n") line++;
      i++;
    }
  };
  const expectChar = (c: string) => (text[i] === c ? i++ : fail(`"${c}"`));
  const readString = (): string => {
    if (text[i] !== '"') fail("a string in double quotes");
    const start = i++;
    while (i < text.length && text[i] !== '"' && text[i] !== "\n") i += text[i] === "\\" ? 2 : 1;
    if (text[i] !== '"') fail("the string's closing quote");
    i++;
    try {
      return JSON.parse(text.slice(start, i)) as string;
    } catch {
      return fail("a valid string");
    }
  };
  const LITERAL = /-?(0|[1-9]\d*)(\.\d+)?([eE][+-]?\d+)?|true|false|null/y;
  const readValue = (path: string) => {
    skipSpace();
    if (!lines.has(path)) lines.set(path, line);
    const c = text[i];
    if (c === "{" || c === "[") {
      const close = c === "{" ? "}" : "]";
      i++;
      skipSpace();
      if (text[i] === close) {
        i++;
        return;
      }
      for (let index = 0; ; index++) {
        skipSpace();
        let key = String(index);
        if (c === "{") {
          const keyLine = line;
          key = readString();
          lines.set(path ? `${path}.${key}` : key, keyLine);
          skipSpace();
          expectChar(":");
        }
        readValue(path ? `${path}.${key}` : key);
        skipSpace();
        if (text[i] === ",") i++;
        else if (text[i] === close) {
          i++;
          return;
        } else fail(`"," or "${close}"`);
      }
    } else if (c === '"') readString();
    else {
      LITERAL.lastIndex = i;
      if (!LITERAL.test(text)) fail("a value");
      i = LITERAL.lastIndex;
    }
  };
  readValue("");
  skipSpace();
  if (i < text.length) fail("the end of the file");
  return lines;
}

// ----------------------------------------------------------------------------------------------- CSV

type Quantity = "type" | "joint" | "a" | "alpha" | "d" | "theta" | "min" | "max" | "speed" | "accel";
type Kind = "length" | "angle";
interface Column {
  index: number;
  name: string;
  quantity: Quantity;
  kind?: Kind;
  /** Multiplies the cell's value into SI. */
  factor: number;
}

const UNITS: Record<string, { kind: Kind; factor: number }> = {
  m: { kind: "length", factor: 1 },
  mm: { kind: "length", factor: 1e-3 },
  rad: { kind: "angle", factor: 1 },
  deg: { kind: "angle", factor: DEG },
};
/** Which unit kinds each quantity takes, and the time suffix its unit carries. */
const QUANTITIES: Record<Exclude<Quantity, "type" | "joint">, { kinds: Kind[]; suffix: "" | "_s" | "_s2" }> = {
  a: { kinds: ["length"], suffix: "" },
  d: { kinds: ["length"], suffix: "" },
  alpha: { kinds: ["angle"], suffix: "" },
  theta: { kinds: ["angle"], suffix: "" },
  min: { kinds: ["length", "angle"], suffix: "" },
  max: { kinds: ["length", "angle"], suffix: "" },
  speed: { kinds: ["length", "angle"], suffix: "_s" },
  accel: { kinds: ["length", "angle"], suffix: "_s2" },
};
const REQUIRED: Quantity[] = ["type", "a", "alpha", "d", "theta"];
const UNIT_HINT: Record<string, string> = {
  a: "a_mm or a_m",
  d: "d_mm or d_m",
  alpha: "alpha_deg or alpha_rad",
  theta: "theta_deg or theta_rad",
  min: "min_deg, min_rad, min_mm or min_m",
  max: "max_deg, max_rad, max_mm or max_m",
  speed: "speed_deg_s, speed_rad_s, speed_mm_s or speed_m_s",
  accel: "accel_deg_s2, accel_rad_s2, accel_mm_s2 or accel_m_s2",
};
const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

function readColumn(name: string, index: number): Column | string {
  if (name === "type" || name === "joint") return { index, name, quantity: name, factor: 1 };
  const m = /^(a|alpha|d|theta|min|max|speed|accel)(?:_(.*))?$/.exec(name);
  if (!m) return `unknown column "${name}" (columns: joint, type, ${Object.values(UNIT_HINT).map((h) => h.split(" or ")[0]).join(", ")} …)`;
  const quantity = m[1] as keyof typeof QUANTITIES;
  const spec = QUANTITIES[quantity];
  const unitText = m[2] ?? "";
  const base = spec.suffix && unitText.endsWith(spec.suffix) ? unitText.slice(0, -spec.suffix.length) : spec.suffix ? null : unitText;
  const unit = base === null ? undefined : UNITS[base];
  if (!unit || !spec.kinds.includes(unit.kind)) return `column "${name}" needs its unit in the name: ${UNIT_HINT[quantity]}`;
  return { index, name, quantity, kind: unit.kind, factor: unit.factor };
}

function parseArmCsv(text: string): ArmUploadResult {
  const issues: ArmUploadIssue[] = [];
  const add = (line: number | null, field: string, message: string) => issues.push({ line, field, message });
  const fail = (): ArmUploadResult => ({ ok: false, format: "csv", issues: sortIssues(issues) });

  // Directive lines (`# key: value`) anywhere before the header; csv-parse skips them as comments.
  const directives = new Map<string, { line: number; value: string }>();
  text.split(/\r\n|\r|\n/).forEach((raw, i) => {
    const m = /^\s*#\s*([A-Za-z_]+)\s*:\s*(.*?)\s*$/.exec(raw);
    if (!m) return;
    const key = m[1]!.toLowerCase();
    if (directives.has(key)) add(i + 1, key, `"${key}" is given twice (first on line ${directives.get(key)!.line})`);
    else directives.set(key, { line: i + 1, value: m[2]! });
  });

  let records: { record: string[]; info: { lines: number } }[];
  try {
    records = parseCsv(text, {
      bom: true,
      comment: "#",
      comment_no_infix: true,
      skip_empty_lines: true,
      relax_column_count: true,
      trim: true,
      info: true,
    }) as unknown as { record: string[]; info: { lines: number } }[];
  } catch (e) {
    const err = e as Error & { lines?: number };
    add(err.lines ?? null, "file", `not a readable CSV table: ${err.message}`);
    return fail();
  }

  let convention: ArmModel["convention"] = "standard";
  const conv = directives.get("convention");
  if (!conv) add(1, "convention", 'say the DH convention on a line before the header: "# convention: standard" or "# convention: modified"');
  else if (conv.value === "standard" || conv.value === "modified") convention = conv.value;
  else add(conv.line, "convention", `convention is "standard" or "modified", not "${conv.value}"`);

  const transforms: Partial<Record<"base" | "tool", number[]>> = {};
  for (const [key, { line, value }] of directives) {
    if (key === "convention") continue;
    const m = /^(base|tool)_(m|mm)$/.exec(key);
    if (!m) {
      add(line, key, `unknown directive "${key}" (directives: convention, tool_m, tool_mm, base_m, base_mm)`);
      continue;
    }
    const cells = value.split(/[\s,;]+/).filter(Boolean);
    if (cells.length !== 16 || !cells.every((c) => NUMBER.test(c))) {
      add(line, key, `the ${m[1]} is 16 numbers (a 4x4 transform, row-major), found ${cells.length === 16 ? "a value that is not a number" : `${cells.length} values`}`);
      continue;
    }
    const matrix = cells.map(Number);
    for (const t of [3, 7, 11]) matrix[t] = matrix[t]! * UNITS[m[2]!]!.factor;
    const problem = rigidTransformProblem(matrix);
    if (problem) add(line, key, `the ${m[1]} is not a rigid transform: ${problem}`);
    else if (transforms[m[1] as "base" | "tool"]) add(line, key, `the ${m[1]} is given twice`);
    else transforms[m[1] as "base" | "tool"] = matrix;
  }

  const header = records[0];
  if (!header) {
    add(null, "file", "the file is empty: a header row and one row per joint are needed");
    return fail();
  }
  const headerLine = header.info.lines;
  const columns: Column[] = [];
  const seenNames = new Map<string, number>();
  const seenQuantities = new Map<string, Column>();
  header.record.forEach((rawName, index) => {
    const name = rawName.trim().toLowerCase();
    if (seenNames.has(name)) {
      add(headerLine, name || `column ${index + 1}`, `duplicate column "${name}" (columns ${seenNames.get(name)! + 1} and ${index + 1})`);
      return;
    }
    seenNames.set(name, index);
    const column = readColumn(name, index);
    if (typeof column === "string") return add(headerLine, name || `column ${index + 1}`, column);
    const key = column.kind && !["a", "d", "alpha", "theta"].includes(column.quantity) ? `${column.quantity}/${column.kind}` : column.quantity;
    const earlier = seenQuantities.get(key);
    if (earlier) return add(headerLine, name, `"${name}" gives the same values as "${earlier.name}": keep one`);
    seenQuantities.set(key, column);
    columns.push(column);
  });
  for (const q of REQUIRED) {
    const named = [...seenNames.keys()].some((name) => name === q || name.startsWith(`${q}_`)); // already reported
    if (!named && ![...seenQuantities.values()].some((c) => c.quantity === q)) {
      add(headerLine, q, q === "type" ? 'missing column "type" (revolute or prismatic)' : `missing column "${q}" (${UNIT_HINT[q]})`);
    }
  }
  if (issues.length) return fail();

  const rows = records.slice(1);
  if (rows.length === 0) add(headerLine, "joints", "no joints: one row per joint is needed below the header");
  if (rows.length > MAX_JOINTS) add(rows[MAX_JOINTS]!.info.lines, "joints", `at most ${MAX_JOINTS} joints; this file has ${rows.length}`);

  const joints: ArmModel["joints"] = [];
  rows.slice(0, MAX_JOINTS).forEach(({ record, info }, r) => {
    const line = info.lines;
    if (record.length !== header.record.length) {
      add(line, "row", `${record.length} values where the header has ${header.record.length} columns`);
      return;
    }
    const cell = (c: Column) => record[c.index]!.trim();
    const number = (c: Column): number | undefined => {
      const text = cell(c);
      if (text === "") return undefined;
      if (!NUMBER.test(text)) {
        add(line, c.name, `"${text}" is not a number`);
        return undefined;
      }
      return Number(text) * c.factor;
    };
    const byQuantity = (q: Quantity) => columns.filter((c) => c.quantity === q);
    const typeText = cell(byQuantity("type")[0]!).toLowerCase();
    const type = typeText === "revolute" || typeText === "prismatic" ? typeText : undefined;
    if (!type) add(line, "type", `type is "revolute" or "prismatic", not "${typeText}"`);
    const jointColumn = byQuantity("joint")[0];
    if (jointColumn && cell(jointColumn) !== String(r + 1)) add(line, "joint", `joint numbers run 1, 2, …: this row is joint ${r + 1}, not "${cell(jointColumn)}"`);

    const required: Partial<Record<"a" | "alpha" | "d" | "theta", number>> = {};
    for (const q of ["a", "alpha", "d", "theta"] as const) {
      const c = byQuantity(q)[0]!;
      if (cell(c) === "") add(line, c.name, `joint ${r + 1} has no ${q}`);
      else required[q] = number(c);
    }
    const ownKind: Kind = type === "prismatic" ? "length" : "angle";
    const optional: Partial<Record<"min" | "max" | "maxSpeed" | "maxAccel", number>> = {};
    const fieldOf = { min: "min", max: "max", speed: "maxSpeed", accel: "maxAccel" } as const;
    const usedColumn: Partial<Record<"min" | "max", Column>> = {};
    for (const q of ["min", "max", "speed", "accel"] as const) {
      for (const c of byQuantity(q)) {
        if (cell(c) === "") continue;
        if (type && c.kind !== ownKind) {
          add(line, c.name, `joint ${r + 1} is ${type}: its ${q} goes in ${ownKind === "angle" ? "an angle" : "a length"} column (${UNIT_HINT[q]})`);
          continue;
        }
        const v = number(c);
        if (v === undefined) continue;
        if ((q === "speed" || q === "accel") && !(v > 0)) {
          add(line, c.name, `${q} must be above zero`);
          continue;
        }
        optional[fieldOf[q]] = v;
        if (q === "min" || q === "max") usedColumn[q] = c;
      }
    }
    if (optional.min !== undefined && optional.max !== undefined && optional.min >= optional.max) {
      add(line, usedColumn.min!.name, `joint ${r + 1}: the range's minimum (${cell(usedColumn.min!)}) must be below its maximum (${cell(usedColumn.max!)})`);
    }
    if (!type || Object.keys(required).length < 4 || Object.values(required).some((v) => v === undefined)) return;
    joints.push({ type, a: required.a!, alpha: required.alpha!, d: required.d!, theta: required.theta!, ...optional });
  });
  if (issues.length) return fail();

  // The shared schema as the last word (everything it checks was checked above with a line).
  const parsed = armModelSchema.safeParse({ convention, joints, ...transforms });
  if (!parsed.success) {
    for (const issue of parsed.error.issues) {
      const row = issue.path[0] === "joints" && typeof issue.path[1] === "number" ? rows[issue.path[1]] : undefined;
      add(row?.info.lines ?? null, issue.path.join("."), jointWords(issue.path as (string | number)[], issue.message));
    }
    return fail();
  }
  return { ok: true, format: "csv", model: parsed.data };
}

function sortIssues(issues: ArmUploadIssue[]): ArmUploadIssue[] {
  return issues.sort((x, y) => (x.line ?? 0) - (y.line ?? 0));
}
