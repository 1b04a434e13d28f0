// The drive feature's public pieces, reused by the recordings replay.
export { DriveWorkspace } from "./components/drive-workspace.tsx";
