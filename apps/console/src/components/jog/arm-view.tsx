import { memo, useEffect, useMemo, useRef } from "react";
import { Canvas, useFrame, useThree } from "@react-three/fiber";
import { OrbitControls } from "@react-three/drei";
import * as THREE from "three";
import {
  compileArm,
  geometricJacobianInto,
  velocityEllipsoidInto,
  type ArmModel,
  type VelocityEllipsoid,
} from "@jogwright/kinematics";
import type { RecordedFrame } from "@jogwright/shared";

/**
 * What the view reads: the newest pose (joint values and the two twists) and a serial that moves with it.
 * The live jog client and a replay (FrameSource) are ones; so is a still pose set by sliders (pose-source.ts).
 */
export interface ArmPoseSource {
  latestFrame(): Pick<RecordedFrame, "q" | "twistCommanded" | "twistAchieved"> | null;
  frameSerial(): number;
  /** Calls `listener` synchronously whenever the serial moves; returns the unsubscribe. */
  onFrame(listener: () => void): () => void;
}

/**
 * The 3D arm, built from its DH model in the browser: every link frame from q (kinematics package,
 * forwardPoseInto via geometricJacobianInto), links as cylinders (each DH link drawn as its two offsets:
 * along z by d and along x by a), the joint axes (standard DH: joint i turns about z_{i-1}; modified:
 * about z_i), the TCP frame, arrows for the commanded and achieved linear velocity and the linear
 * velocity ellipsoid (Yoshikawa 1985) at the TCP.
 *
 * Scene units are metres. The robot's world frame is z-up; three.js is y-up, so everything robot sits
 * in a group turned −90° about x. Updates happen in useFrame from the FrameSource (no React render per
 * frame). The canvas renders on demand: the source tells the view of each new frame (`onFrame`), and the
 * view asks for a render only when the frame moves something (q or a twist changed) — an arm standing
 * still costs no rendering and schedules no animation frames, and a jogging one renders once per display
 * frame. (Before, a requestAnimationFrame loop polled the serial: a frame was noticed at the next animation
 * frame and drawn at the one after, a display frame later than now, and the loop ran 60 times a second on
 * every page with a 3D view, arm moving or not.)
 */

// Colours are the "Ink & Iris" tokens (DEVELOPERS.md, Visual identity): no state colours as decoration.
const INK_100 = "#e6e9f0";
const INK_300 = "#a9b1c2";
const INK_400 = "#8089a0";
const INK_600 = "#394357";
const INK_700 = "#283040";
const INK_950 = "#0b0e14";
const IRIS_300 = "#b9b7ff";
const IRIS_400 = "#8f8cff";

/** Arrow length per TCP speed: 1 m/s → 1.2 m, so the 250 mm/s reduced-speed cap is a 0.3 m arrow. */
const ARROW_M_PER_M_PER_S = 1.2;
/** Ellipsoid semi-axis per (m/s per rad/s) of J_P's singular values. */
const ELLIPSOID_SCALE_M = 0.18;
/** Sizes of the drawn arm [m]: links and joints are cylinders, the TCP frame three axes. */
const DRAWN_M = { linkRadius: 0.028, jointRadius: 0.042, jointLength: 0.12, tcpAxisLength: 0.1 } as const;

const Y_UP = new THREE.Vector3(0, 1, 0);
const dir = new THREE.Vector3();
const basis = new THREE.Matrix4();

/** Puts a unit cylinder (height 1 along y, radius 1) between two points. */
function placeSegment(mesh: THREE.Object3D, ax: number, ay: number, az: number, bx: number, by: number, bz: number, radius: number): void {
  dir.set(bx - ax, by - ay, bz - az);
  const length = dir.length();
  if (length < 1e-5) {
    mesh.visible = false;
    return;
  }
  mesh.visible = true;
  mesh.position.set((ax + bx) / 2, (ay + by) / 2, (az + bz) / 2);
  mesh.quaternion.setFromUnitVectors(Y_UP, dir.divideScalar(length));
  mesh.scale.set(radius, length, radius);
}

interface ArmRigProps {
  arm: ArmModel;
  restPose: readonly number[];
  source: ArmPoseSource;
  /** Written on every drawn frame (data-drawn-frames, data-tcp-mm) so tests can see the view move. */
  statusRef: React.RefObject<HTMLDivElement | null>;
}

interface RigScratch {
  n: number;
  restPose: readonly number[];
  J: Float64Array;
  pose: Float64Array;
  ellipsoid: VelocityEllipsoid;
  rest: Float64Array;
  lastSerial: number;
  drawn: number;
}

const createRigScratch = (n: number, restPose: readonly number[]): RigScratch => ({
  n,
  restPose,
  J: new Float64Array(6 * n),
  pose: new Float64Array(16),
  ellipsoid: { axes: new Float64Array(9), lengths: new Float64Array(3), manipulability: 0 },
  rest: Float64Array.from({ length: n }, (_, i) => restPose[i] ?? 0),
  lastSerial: -1,
  drawn: 0,
});

function ArmRig({ arm, restPose, source, statusRef }: ArmRigProps) {
  const kernel = useMemo(() => compileArm(arm), [arm]);
  const n = kernel.n;
  // Buffers the frame loop writes into (no allocation per frame); made again only when the arm or rest pose changes.
  const scratchRef = useRef<RigScratch | null>(null);
  const links = useRef<(THREE.Mesh | null)[]>([]);
  const joints = useRef<(THREE.Mesh | null)[]>([]);
  const tool = useRef<THREE.Mesh>(null);
  const tcpAxes = useRef<(THREE.Mesh | null)[]>([]);
  const ellipsoid = useRef<THREE.Mesh>(null);
  const arrowShafts = useRef<(THREE.Mesh | null)[]>([]);
  const arrowHeads = useRef<(THREE.Mesh | null)[]>([]);

  const invalidate = useThree((state) => state.invalidate);
  useEffect(() => {
    let seenSerial = -2;
    const last = new Float64Array(n + 12);
    const check = () => {
      const serial = source.frameSerial();
      if (serial === seenSerial) return;
      seenSerial = serial;
      const frame = source.latestFrame();
      let changed = frame === null;
      if (frame) {
        for (let i = 0; i < n; i++) if (last[i] !== frame.q[i]) { last[i] = frame.q[i]!; changed = true; }
        for (let i = 0; i < 6; i++) {
          if (last[n + i] !== frame.twistCommanded[i]) { last[n + i] = frame.twistCommanded[i]!; changed = true; }
          if (last[n + 6 + i] !== frame.twistAchieved[i]) { last[n + 6 + i] = frame.twistAchieved[i]!; changed = true; }
        }
      }
      if (changed) invalidate();
    };
    check();
    return source.onFrame(check);
  }, [source, n, invalidate]);

  const unitCylinder = useMemo(() => new THREE.CylinderGeometry(1, 1, 1, 14), []);
  const unitCone = useMemo(() => new THREE.ConeGeometry(1, 1, 14), []);
  const sphere = useMemo(() => new THREE.SphereGeometry(1, 24, 16), []);

  useFrame(() => {
    let scratch = scratchRef.current;
    if (!scratch || scratch.n !== n || scratch.restPose !== restPose) scratch = scratchRef.current = createRigScratch(n, restPose);
    const serial = source.frameSerial();
    if (serial === scratch.lastSerial) return;
    scratch.lastSerial = serial;
    const frame = source.latestFrame();
    const q = frame && frame.q.length === n ? frame.q : scratch.rest;
    const { J, pose } = scratch;
    geometricJacobianInto(kernel, q, J, pose);
    const F = kernel.frames;

    // Links: frame i origin → (along z_i by d, standard; along x_i by a, modified) → frame i+1 origin.
    for (let i = 0; i < n; i++) {
      const f = 16 * i;
      const ox = F[f + 3]!, oy = F[f + 7]!, oz = F[f + 11]!;
      const nx = F[f + 19]!, ny = F[f + 23]!, nz = F[f + 27]!;
      let px: number, py: number, pz: number;
      if (!kernel.modified) {
        const d = kernel.d[i]! + (kernel.prismatic[i] === 1 ? q[i]! : 0);
        px = ox + d * F[f + 2]!; py = oy + d * F[f + 6]!; pz = oz + d * F[f + 10]!;
      } else {
        const a = kernel.a[i]!;
        px = ox + a * F[f]!; py = oy + a * F[f + 4]!; pz = oz + a * F[f + 8]!;
      }
      const first = links.current[2 * i];
      const second = links.current[2 * i + 1];
      if (first) placeSegment(first, ox, oy, oz, px, py, pz, DRAWN_M.linkRadius);
      if (second) placeSegment(second, px, py, pz, nx, ny, nz, DRAWN_M.linkRadius);

      // Joint i's axis: z of frame i (standard, = z_{i-1} in DH numbering) or of frame i+1 (modified).
      const g = kernel.modified ? f + 16 : f;
      const joint = joints.current[i];
      if (joint) {
        const zx = F[g + 2]!, zy = F[g + 6]!, zz = F[g + 10]!;
        const cx = F[g + 3]!, cy = F[g + 7]!, cz = F[g + 11]!;
        const h = DRAWN_M.jointLength / 2;
        placeSegment(joint, cx - h * zx, cy - h * zy, cz - h * zz, cx + h * zx, cy + h * zy, cz + h * zz, DRAWN_M.jointRadius);
      }
    }
    const tx = pose[3]!, ty = pose[7]!, tz = pose[11]!;
    const last = 16 * n;
    if (tool.current) placeSegment(tool.current, F[last + 3]!, F[last + 7]!, F[last + 11]!, tx, ty, tz, DRAWN_M.linkRadius * 0.6);

    // TCP frame: the columns of the pose's rotation.
    for (let c = 0; c < 3; c++) {
      const mesh = tcpAxes.current[c];
      if (!mesh) continue;
      const L = DRAWN_M.tcpAxisLength;
      placeSegment(mesh, tx, ty, tz, tx + L * pose[c]!, ty + L * pose[4 + c]!, tz + L * pose[8 + c]!, 0.006);
    }

    // Velocity ellipsoid of J_P: semi-axes along the eigenvectors, lengths = singular values.
    const e = velocityEllipsoidInto(J, n, 0, scratch.ellipsoid);
    const mesh = ellipsoid.current;
    if (mesh) {
      const A = e.axes;
      const l0 = Math.max(1e-3, e.lengths[0]!) * ELLIPSOID_SCALE_M;
      const l1 = Math.max(1e-3, e.lengths[1]!) * ELLIPSOID_SCALE_M;
      const l2 = Math.max(1e-3, e.lengths[2]!) * ELLIPSOID_SCALE_M;
      // Keep the basis right-handed so the sphere is not turned inside out.
      const cross = A[0]! * (A[4]! * A[8]! - A[5]! * A[7]!) - A[1]! * (A[3]! * A[8]! - A[5]! * A[6]!) + A[2]! * (A[3]! * A[7]! - A[4]! * A[6]!);
      const s2 = cross < 0 ? -l2 : l2;
      basis.set(
        A[0]! * l0, A[3]! * l1, A[6]! * s2, tx,
        A[1]! * l0, A[4]! * l1, A[7]! * s2, ty,
        A[2]! * l0, A[5]! * l1, A[8]! * s2, tz,
        0, 0, 0, 1,
      );
      mesh.matrix.copy(basis);
      mesh.matrixWorldNeedsUpdate = true;
    }

    // Linear velocity arrows: commanded (accent) and achieved (light).
    for (let k = 0; k < 2; k++) {
      const shaft = arrowShafts.current[k];
      const head = arrowHeads.current[k];
      if (!shaft || !head) continue;
      const twist = frame ? (k === 0 ? frame.twistCommanded : frame.twistAchieved) : null;
      const vx = twist?.[0] ?? 0, vy = twist?.[1] ?? 0, vz = twist?.[2] ?? 0;
      const speed = Math.hypot(vx, vy, vz);
      if (speed < 1e-3) {
        shaft.visible = false;
        head.visible = false;
        continue;
      }
      const length = speed * ARROW_M_PER_M_PER_S;
      const headLength = Math.min(0.05, length * 0.4);
      const ux = vx / speed, uy = vy / speed, uz = vz / speed;
      const bx = tx + ux * (length - headLength), by = ty + uy * (length - headLength), bz = tz + uz * (length - headLength);
      placeSegment(shaft, tx, ty, tz, bx, by, bz, k === 0 ? 0.008 : 0.005);
      placeSegment(head, bx, by, bz, bx + ux * headLength, by + uy * headLength, bz + uz * headLength, 1);
      head.scale.set(k === 0 ? 0.022 : 0.016, headLength, k === 0 ? 0.022 : 0.016);
    }

    scratch.drawn++;
    const status = statusRef.current;
    if (status) {
      status.dataset.drawnFrames = String(scratch.drawn);
      status.dataset.tcpMm = `${Math.round(tx * 1000)},${Math.round(ty * 1000)},${Math.round(tz * 1000)}`;
    }
  });

  return (
    <group rotation={[-Math.PI / 2, 0, 0]}>
      {/* Pedestal under the base frame. */}
      <mesh position={[0, 0, -0.02]} rotation={[Math.PI / 2, 0, 0]}>
        <cylinderGeometry args={[0.12, 0.14, 0.04, 24]} />
        <meshLambertMaterial color={INK_600} />
      </mesh>
      {Array.from({ length: 2 * n }, (_, i) => (
        <mesh key={`link-${i}`} ref={(m) => void (links.current[i] = m)} geometry={unitCylinder}>
          <meshLambertMaterial color={INK_300} />
        </mesh>
      ))}
      {Array.from({ length: n }, (_, i) => (
        <mesh key={`joint-${i}`} ref={(m) => void (joints.current[i] = m)} geometry={unitCylinder}>
          <meshLambertMaterial color={IRIS_400} />
        </mesh>
      ))}
      <mesh ref={tool} geometry={unitCylinder}>
        <meshLambertMaterial color={INK_400} />
      </mesh>
      {[INK_100, INK_400, IRIS_300].map((color, c) => (
        <mesh key={`tcp-${c}`} ref={(m) => void (tcpAxes.current[c] = m)} geometry={unitCylinder}>
          <meshBasicMaterial color={color} />
        </mesh>
      ))}
      <mesh ref={ellipsoid} geometry={sphere} matrixAutoUpdate={false}>
        <meshLambertMaterial color={IRIS_300} transparent opacity={0.3} depthWrite={false} />
      </mesh>
      {[IRIS_300, INK_100].map((color, k) => (
        <group key={`arrow-${k}`}>
          <mesh ref={(m) => void (arrowShafts.current[k] = m)} geometry={unitCylinder} visible={false}>
            <meshBasicMaterial color={color} />
          </mesh>
          <mesh ref={(m) => void (arrowHeads.current[k] = m)} geometry={unitCone} visible={false}>
            <meshBasicMaterial color={color} />
          </mesh>
        </group>
      ))}
    </group>
  );
}

const CAMERA = { position: [1.6, 1.25, 1.75] as [number, number, number], fov: 42, near: 0.01, far: 50 };
// No MSAA: software renderers (headless Chromium) pay dearly for it; dpr up to 2 smooths edges on
// high-density screens instead.
const GL_OPTIONS = { antialias: false, powerPreference: "high-performance" as const };

/**
 * A software WebGL (SwiftShader, llvmpipe — e.g. headless Chromium without a GPU) hands every frame back
 * to the compositor through the page's main thread, at a cost that grows with the pixel count; there the
 * canvas renders at 0.75 of a CSS pixel so the page keeps its frame rate. Real GPUs are unaffected.
 */
const SOFTWARE_DPR = 0.75;

function isSoftwareRenderer(gl: THREE.WebGLRenderer): boolean {
  const context = gl.getContext();
  const info = context.getExtension("WEBGL_debug_renderer_info");
  const renderer = String(info ? context.getParameter(info.UNMASKED_RENDERER_WEBGL) : context.getParameter(context.RENDERER));
  return /swiftshader|llvmpipe|software/i.test(renderer);
}

export interface ArmViewProps {
  arm: ArmModel;
  /** Pose shown before the first frame (the arm's ready pose). */
  restPose: readonly number[];
  source: ArmPoseSource;
  className?: string;
}

/** Memoised: the page re-renders at ~15 Hz for its panels; the canvas needs none of those renders. */
export const ArmView = memo(function ArmView({ arm, restPose, source, className }: ArmViewProps) {
  const statusRef = useRef<HTMLDivElement>(null);
  return (
    <div
      ref={statusRef}
      data-testid="arm-view"
      className={className ?? "relative h-[26rem] overflow-hidden rounded-lg border border-ink-700 bg-ink-950"}
    >
      <Canvas
        frameloop="demand"
        dpr={[1, 2]}
        camera={CAMERA}
        gl={GL_OPTIONS}
        onCreated={({ gl, setDpr }) => {
          if (isSoftwareRenderer(gl)) {
            setDpr(SOFTWARE_DPR);
            statusRef.current?.setAttribute("data-software-renderer", "true");
          }
        }}
        aria-label="3D view of the arm"
        role="img"
      >
        <color attach="background" args={[INK_950]} />
        <ambientLight intensity={0.55} />
        <directionalLight position={[2, 4, 3]} intensity={1.6} />
        <directionalLight position={[-3, 2, -2]} intensity={0.4} />
        <gridHelper args={[2, 20, INK_600, INK_700]} />
        <ArmRig arm={arm} restPose={restPose} source={source} statusRef={statusRef} />
        <OrbitControls makeDefault target={[0.25, 0.5, 0]} enableDamping={false} />
      </Canvas>
      <p className="pointer-events-none absolute bottom-2 left-3 text-xs text-ink-400">
        Drag to orbit · scroll to zoom · TCP frame x light, y grey, z violet · arrows: commanded (violet) and achieved
        (light) TCP velocity · translucent: velocity ellipsoid
      </p>
    </div>
  );
});
