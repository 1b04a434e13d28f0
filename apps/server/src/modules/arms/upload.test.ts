import { describe, expect, it } from "vitest";
import { Matrix, SingularValueDecomposition } from "ml-matrix";
import { demoArms, forwardPose, geometricJacobian } from "@jogwright/kinematics";
import { armModelSchema, type ArmModel } from "@jogwright/shared";
import { parseArmUpload, previewArm, rigidTransformProblem } from "./upload.ts";

const DEG = Math.PI / 180;

/**
 * PUMA 560 in modified DH (Craig, "Introduction to Robotics", 3rd ed., §3.7: the PUMA 560's link frames and
 * Fig. 3.21's table, rows alpha_{i-1}, a_{i-1}, d_i, theta_i). The table's shape is Craig's; the lengths
 * a2 = 431.8 mm, a3 = 20.32 mm, d3 = 149.09 mm, d4 = 433.07 mm are quoted from memory (the usual PUMA
 * 560 figures), so the check below does not rely on them: it compares our forward kinematics with an
 * independent computation (ml-matrix products of Craig's link transform, eq. 3.6, written out here) and
 * with Craig's closed-form position of the wrist (eq. 3.14, from memory; derived again by the product).
 */
const PUMA = { a2: 0.4318, a3: 0.02032, d3: 0.14909, d4: 0.43307 };
const PUMA_CSV = [
  "# convention: modified",
  "joint,type,alpha_deg,a_mm,d_mm,theta_deg,min_deg,max_deg,speed_deg_s",
  "1,revolute,0,0,0,0,-160,160,",
  "2,revolute,-90,0,0,0,-225,45,",
  "3,revolute,0,431.8,149.09,0,-45,225,",
  "4,revolute,-90,20.32,433.07,0,-110,170,",
  "5,revolute,90,0,0,0,-100,100,",
  "6,revolute,-90,0,0,0,-266,266,",
].join("\n");
const PUMA_JSON: ArmModel = {
  convention: "modified",
  joints: [
    { type: "revolute", alpha: 0, a: 0, d: 0, theta: 0, min: -160 * DEG, max: 160 * DEG },
    { type: "revolute", alpha: -90 * DEG, a: 0, d: 0, theta: 0, min: -225 * DEG, max: 45 * DEG },
    { type: "revolute", alpha: 0, a: PUMA.a2, d: PUMA.d3, theta: 0, min: -45 * DEG, max: 225 * DEG },
    { type: "revolute", alpha: -90 * DEG, a: PUMA.a3, d: PUMA.d4, theta: 0, min: -110 * DEG, max: 170 * DEG },
    { type: "revolute", alpha: 90 * DEG, a: 0, d: 0, theta: 0, min: -100 * DEG, max: 100 * DEG },
    { type: "revolute", alpha: -90 * DEG, a: 0, d: 0, theta: 0, min: -266 * DEG, max: 266 * DEG },
  ],
};

/** Craig eq. 3.6: ^{i-1}T_i = Rx(alpha_{i-1}) Tx(a_{i-1}) Rz(theta_i) Tz(d_i), as one matrix, via ml-matrix. */
function craigLink(alpha: number, a: number, d: number, theta: number): Matrix {
  const [ct, st, ca, sa] = [Math.cos(theta), Math.sin(theta), Math.cos(alpha), Math.sin(alpha)];
  return new Matrix([
    [ct, -st, 0, a],
    [st * ca, ct * ca, -sa, -sa * d],
    [st * sa, ct * sa, ca, ca * d],
    [0, 0, 0, 1],
  ]);
}

function ok(result: ReturnType<typeof parseArmUpload>): ArmModel {
  if (!result.ok) throw new Error(`refused: ${JSON.stringify(result.issues)}`);
  return result.model;
}

describe("a CSV DH table and the arm JSON give the same arm", () => {
  it("the PUMA 560 table in mm/deg reads as the same arm as its JSON in m/rad, with the pose ml-matrix and Craig's closed form give", () => {
    const fromCsv = ok(parseArmUpload(PUMA_CSV));
    const fromJson = ok(parseArmUpload(JSON.stringify(PUMA_JSON)));
    expect(fromCsv.convention).toBe("modified");
    fromCsv.joints.forEach((j, i) => {
      for (const k of ["a", "alpha", "d", "theta", "min", "max"] as const) expect(j[k]).toBeCloseTo(fromJson.joints[i]![k]!, 12);
    });
    const q = [0.3, -0.7, 0.4, 1.1, -0.6, 0.25];
    const pCsv = forwardPose(fromCsv, q);
    const pJson = forwardPose(fromJson, q);
    for (let k = 0; k < 16; k++) expect(pCsv[k]).toBeCloseTo(pJson[k]!, 12);

    // Independent: the product of Craig's link matrices (ml-matrix), rows from PUMA_JSON.
    let T = Matrix.eye(4);
    PUMA_JSON.joints.forEach((j, i) => (T = T.mmul(craigLink(j.alpha, j.a, j.d, j.theta + q[i]!))));
    for (let r = 0; r < 4; r++) for (let c = 0; c < 4; c++) expect(pCsv[4 * r + c]).toBeCloseTo(T.get(r, c), 12);

    // Craig eq. 3.14 (from memory): the wrist position, which the last three (intersecting) axes do not move.
    const [c1, s1, c2, s2] = [Math.cos(q[0]!), Math.sin(q[0]!), Math.cos(q[1]!), Math.sin(q[1]!)];
    const [c23, s23] = [Math.cos(q[1]! + q[2]!), Math.sin(q[1]! + q[2]!)];
    const reach = PUMA.a2 * c2 + PUMA.a3 * c23 - PUMA.d4 * s23;
    expect(pCsv[3]).toBeCloseTo(c1 * reach - PUMA.d3 * s1, 12);
    expect(pCsv[7]).toBeCloseTo(s1 * reach + PUMA.d3 * c1, 12);
    expect(pCsv[11]).toBeCloseTo(-PUMA.a3 * s23 - PUMA.a2 * s2 - PUMA.d4 * c23, 12);
  });

  it("the six-axis demo arm's table in mm/deg with its tool reads as the seeded arm (m/rad), and in m/rad too", () => {
    const demo = demoArms.find((a) => a.slug === "cell-arm-6")!.model;
    // PRODUCT.md "Demo scenario" table, written out in mm and deg.
    const mmDeg = [
      "\uFEFF# convention: standard",
      "# tool_mm: 1 0 0 0  0 1 0 0  0 0 1 160  0 0 0 1",
      "type,a_mm,alpha_deg,d_mm,theta_deg,min_deg,max_deg,speed_deg_s,accel_deg_s2",
      "revolute,75,-90,445,0,-170,170,150,600",
      "revolute,400,0,0,-90,-100,145,150,600",
      "revolute,35,-90,0,0,-155,150,190,760",
      "revolute,0,90,420,0,-185,185,300,1200",
      "revolute,0,-90,0,0,-120,120,300,1200",
      "revolute,0,0,90,0,-350,350,450,1800",
    ].join("\r\n");
    const mRad = [
      "# convention: standard",
      "# tool_m: 1,0,0,0,0,1,0,0,0,0,1,0.16,0,0,0,1",
      "type,a_m,alpha_rad,d_m,theta_rad,min_rad,max_rad,speed_rad_s,accel_rad_s2",
      ...demo.joints.map((j) => [j.type, j.a, j.alpha, j.d, j.theta, j.min, j.max, j.maxSpeed, j.maxAccel].join(",")),
    ].join("\n");
    for (const text of [mmDeg, mRad]) {
      const arm = ok(parseArmUpload(Buffer.from(text, "utf8")));
      expect(arm.convention).toBe("standard");
      expect(arm.joints).toHaveLength(6);
      arm.joints.forEach((j, i) => {
        const want = demo.joints[i]!;
        for (const k of ["a", "alpha", "d", "theta", "min", "max", "maxSpeed", "maxAccel"] as const) expect(j[k]).toBeCloseTo(want[k]!, 12);
      });
      arm.tool!.forEach((v, k) => expect(v).toBeCloseTo(demo.tool![k]!, 12));
    }
  });

  it("a prismatic joint takes its range and speed from the length columns", () => {
    const arm = ok(parseArmUpload("# convention: standard\ntype,a_m,alpha_deg,d_mm,theta_deg,min_deg,max_deg,min_mm,max_mm,speed_mm_s\nrevolute,0.3,0,0,0,-90,90,,,\nprismatic,0,0,100,0,,,0,250,200\n"));
    expect(arm.joints[1]).toMatchObject({ type: "prismatic", d: 0.1, min: 0, max: 0.25 });
    expect(arm.joints[1]!.maxSpeed).toBeCloseTo(0.2, 12);
    expect(arm.joints[0]).toMatchObject({ a: 0.3 });
    expect(arm.joints[0]!.max).toBeCloseTo(Math.PI / 2, 12);
  });
});

describe("broken files are refused with the line and field of each problem", () => {
  const HEADER = "type,a_mm,alpha_deg,d_mm,theta_deg,min_deg,max_deg";
  const ROW = "revolute,100,0,0,0,-90,90";
  const csv = (...lines: string[]) => ["# convention: standard", ...lines].join("\n");
  /** A JSON file of these lines, so that a case's `line` is the place of its argument. */
  const lines = (...text: string[]) => text.join("\n");
  const cases: { name: string; text: string; want: { line: number | null; field: string }[] }[] = [
    { name: "a missing column", text: csv("type,a_mm,d_mm,theta_deg", "revolute,1,0,0"), want: [{ line: 2, field: "alpha" }] },
    { name: "a column without its unit", text: csv("type,a,alpha_deg,d_mm,theta_deg", "revolute,1,0,0,0"), want: [{ line: 2, field: "a" }] },
    { name: "a non-numeric value", text: csv(HEADER, ROW, "revolute,1O0,0,0,0,-90,90"), want: [{ line: 4, field: "a_mm" }] },
    { name: "a decimal comma (quoted)", text: csv(HEADER, 'revolute,"100,5",0,0,0,-90,90'), want: [{ line: 3, field: "a_mm" }] },
    { name: "a range whose minimum is above its maximum", text: csv(HEADER, ROW, ROW, "revolute,0,0,0,0,90,-90"), want: [{ line: 5, field: "min_deg" }] },
    { name: "zero joints", text: csv(HEADER), want: [{ line: 2, field: "joints" }] },
    { name: "more than 12 joints", text: csv(HEADER, ...Array.from({ length: 13 }, () => ROW)), want: [{ line: 15, field: "joints" }] },
    { name: "duplicate header names", text: csv("type,a_mm,alpha_deg,d_mm,theta_deg,a_mm", "revolute,1,0,0,0,1"), want: [{ line: 2, field: "a_mm" }] },
    { name: "one quantity in two units", text: csv("type,a_mm,alpha_deg,d_mm,theta_deg,a_m", "revolute,1,0,0,0,1"), want: [{ line: 2, field: "a_m" }] },
    { name: "a tool that is not a rigid transform (scaled)", text: ["# convention: standard", "# tool_mm: 2,0,0,0, 0,1,0,0, 0,0,1,160, 0,0,0,1", HEADER, ROW].join("\n"), want: [{ line: 2, field: "tool_mm" }] },
    { name: "a tool that is a reflection", text: ["# convention: standard", "# tool_m: -1,0,0,0, 0,1,0,0, 0,0,1,0.1, 0,0,0,1", HEADER, ROW].join("\n"), want: [{ line: 2, field: "tool_m" }] },
    { name: "no convention", text: [HEADER, ROW].join("\n"), want: [{ line: 1, field: "convention" }] },
    { name: "an unknown joint type", text: csv(HEADER, "rotary,100,0,0,0,-90,90"), want: [{ line: 3, field: "type" }] },
    { name: "a row with a missing value", text: csv(HEADER, "revolute,100,0,0,-90,90"), want: [{ line: 3, field: "row" }] },
    { name: "a revolute joint's range in a length column", text: csv("type,a_mm,alpha_deg,d_mm,theta_deg,min_mm,max_mm", "revolute,100,0,0,0,-90,90"), want: [{ line: 3, field: "min_mm" }, { line: 3, field: "max_mm" }] },
    { name: "an unclosed quote", text: csv(HEADER, 'revolute,"100,0,0,0,-90,90'), want: [{ line: 3, field: "file" }] },
    {
      name: "JSON: a joint value that is not a number, on its line",
      text: lines(
        "{",
        '  "convention": "standard",',
        '  "joints": [',
        '    { "type": "revolute", "a": 0, "alpha": 0, "d": 0, "theta": 0 },',
        '    { "type": "revolute", "a": "0.4",',
        '      "alpha": 0, "d": 0, "theta": 0 }',
        "  ]",
        "}",
      ),
      want: [{ line: 5, field: "joints.1.a" }],
    },
    {
      name: "JSON: a range whose minimum is above its maximum",
      text: lines('{"convention":"standard",', '"joints":[', '{"type":"revolute","a":0,"alpha":0,"d":0,"theta":0,', ' "min":1,"max":-1}]}'),
      want: [{ line: 4, field: "joints.0.min" }],
    },
    { name: "JSON: zero joints", text: lines("{", '"convention":"modified",', '"joints":[]', "}"), want: [{ line: 3, field: "joints" }] },
    {
      name: "JSON: more than 12 joints",
      text: JSON.stringify({ convention: "standard", joints: Array.from({ length: 13 }, () => ({ type: "revolute", a: 0, alpha: 0, d: 0, theta: 0 })) }),
      want: [{ line: 1, field: "joints" }],
    },
    {
      name: "JSON: a tool that is not a rigid transform",
      text: lines('{"convention":"standard",', '"joints":[{"type":"revolute","a":0,"alpha":0,"d":0,"theta":0}],', '"tool":[1,0,0,0, 0,1,0.5,0, 0,0,1,0.1, 0,0,0,1]}'),
      want: [{ line: 3, field: "tool" }],
    },
    {
      name: "JSON: an unknown field (a unit mistake that would otherwise be dropped)",
      text: lines('{"convention":"standard",', '"joints":[{"type":"revolute","a":0,"alpha":0,"d":0,"theta":0,', '"maxSpeedDeg":150}]}'),
      want: [{ line: 3, field: "joints.0.maxSpeedDeg" }],
    },
    { name: "JSON: a syntax error", text: lines('{"convention":"standard",', '"joints":[', "}"), want: [{ line: 3, field: "file" }] },
  ];
  for (const c of cases) {
    it(`${c.name}: ${c.want.map((w) => `line ${w.line}, ${w.field}`).join("; ")}`, () => {
      const result = parseArmUpload(c.text);
      expect(result.ok).toBe(false);
      if (result.ok) return;
      expect(result.issues.map(({ line, field }) => ({ line, field }))).toEqual(c.want);
      for (const issue of result.issues) expect(issue.message.length).toBeGreaterThan(10);
    });
  }

  it("a BOM and CRLF line ends are read, not refused, and the lines counted as a person does", () => {
    const result = parseArmUpload(Buffer.from(`\uFEFF# convention: standard\r\n${HEADER}\r\n${ROW}\r\nrevolute,1,0,0,0,90,-90\r\n`, "utf8"));
    expect(result.ok).toBe(false);
    if (!result.ok) expect(result.issues).toMatchObject([{ line: 4, field: "min_deg" }]);
    expect(parseArmUpload(Buffer.from(`\uFEFF# convention: standard\r\n${HEADER}\r\n${ROW}\r\n`, "utf8")).ok).toBe(true);
  });

  it("the format is told by the content: JSON with a BOM and leading blank lines is JSON", () => {
    const result = parseArmUpload(`\uFEFF\n\n${JSON.stringify(PUMA_JSON)}`);
    expect(result).toMatchObject({ ok: true, format: "json" });
  });
});

describe("rigid transforms and the preview", () => {
  it("a rotation with a translation is rigid; a shear, a scale or a wrong last row is not", () => {
    const c = Math.cos(0.3), s = Math.sin(0.3);
    expect(rigidTransformProblem([c, -s, 0, 0.1, s, c, 0, 0.2, 0, 0, 1, 0.3, 0, 0, 0, 1])).toBeNull();
    expect(rigidTransformProblem([1, 0.1, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1])).toMatch(/orthonormal/);
    expect(rigidTransformProblem([1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 1, 1])).toMatch(/last row/);
  });

  it("the six-axis demo arm's σ_min at the zero pose is 0: its wrist is singular there (PRODUCT.md, demo scenario)", () => {
    const demo = armModelSchema.parse(demoArms.find((a) => a.slug === "cell-arm-6")!.model);
    const preview = previewArm("json", demo);
    expect(preview.sigmaMinAtZero).toBeLessThan(1e-12);
    expect(preview.manipulabilityAtZero).toBeLessThan(1e-12);
    // The PUMA 560 at q = 0 has q5 = 0: its wrist is singular too (Craig §4.9, from memory; textbook fact).
    expect(previewArm("csv", ok(parseArmUpload(PUMA_CSV))).sigmaMinAtZero).toBeLessThan(1e-12);
  });

  it("an arm that is not singular at the zero pose gets the σ_min and ∏σ that ml-matrix's SVD gives", () => {
    const demo = armModelSchema.parse(demoArms.find((a) => a.slug === "cell-arm-6")!.model);
    // Joint 5's theta offset 50° moves the zero pose off the wrist singularity (derived).
    const bent: ArmModel = { ...demo, joints: demo.joints.map((j, i) => (i === 4 ? { ...j, theta: 50 * DEG } : j)) };
    const preview = previewArm("json", bent);
    const J = geometricJacobian(bent, new Float64Array(6));
    const rows = Array.from({ length: 6 }, (_, r) => Array.from(J.slice(6 * r, 6 * r + 6)));
    const sigma = new SingularValueDecomposition(new Matrix(rows)).diagonal; // reference library (npm registry)
    expect(preview.sigmaMinAtZero).toBeCloseTo(Math.min(...sigma), 10);
    expect(preview.manipulabilityAtZero).toBeCloseTo(sigma.reduce((p, s) => p * s, 1), 10);
    expect(preview.sigmaMinAtZero).toBeGreaterThan(0.01);
  });
});
