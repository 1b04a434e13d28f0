import { useEffect, useMemo, useRef, useState } from "react";
import { Pause, Play } from "lucide-react";
import type { Arm, ProfileParams, RecordedFrame } from "@jogwright/shared";
import { Button } from "../ui/button.tsx";
import { formatFixed } from "../../lib/format.ts";
import { DriveWorkspace } from "./drive-workspace.tsx";
import { ReplaySource } from "./replay-source.ts";

/**
 * Frames played back in the drive page's workspace (3D view, panels, charts): a timeline to scrub and
 * play/pause at real time. The recordings page replays a live session's frames; the bench replays a run
 * (its series as frames).
 */
export function ReplayPlayer({ arm, frames, params }: { arm: Arm; frames: readonly RecordedFrame[]; params: ProfileParams | null }) {
  const source = useMemo(() => {
    const s = new ReplaySource(frames, arm.model.joints.map((j) => j.type));
    s.seek(0);
    return s;
  }, [frames, arm]);
  const [index, setIndex] = useState(0);
  const [isPlaying, setPlaying] = useState(false);
  const playRef = useRef<{ startWallMs: number; startT: number } | null>(null);
  const t0 = frames[0]!.t;
  const tEnd = frames[frames.length - 1]!.t;

  // Real-time playback: the wall clock picks the frame; React state follows at ~15 Hz for the panels.
  useEffect(() => {
    if (!isPlaying) return;
    let raf = 0;
    let lastPublish = 0;
    const startIndex = source.index >= frames.length - 1 ? 0 : source.index;
    playRef.current = { startWallMs: performance.now(), startT: frames[startIndex]!.t };
    const step = (now: number) => {
      const play = playRef.current!;
      const t = play.startT + (now - play.startWallMs) / 1000;
      const i = source.indexAtTime(t);
      source.seek(i);
      if (now - lastPublish > 66 || i >= frames.length - 1) {
        lastPublish = now;
        setIndex(i);
      }
      if (i >= frames.length - 1) {
        setPlaying(false);
        return;
      }
      raf = requestAnimationFrame(step);
    };
    raf = requestAnimationFrame(step);
    return () => cancelAnimationFrame(raf);
  }, [isPlaying, source, frames]);

  const frame = source.frameAt(index);
  return (
    <DriveWorkspace
      arm={arm}
      params={params}
      frame={frame}
      source={source}
      controls={
        <section aria-label="Replay" className="flex items-center gap-3 rounded-lg border border-ink-700 bg-ink-850 p-3">
          <Button variant="primary" onClick={() => setPlaying((p) => !p)} aria-label={isPlaying ? "Pause" : "Play"}>
            {isPlaying ? <Pause aria-hidden className="size-4" /> : <Play aria-hidden className="size-4" />}
            {isPlaying ? "Pause" : "Play"}
          </Button>
          <input
            type="range"
            min={0}
            max={frames.length - 1}
            step={1}
            value={index}
            aria-label="Timeline"
            className="flex-1 accent-iris-400"
            onChange={(event) => {
              setPlaying(false);
              const i = Number(event.target.value);
              source.seek(i);
              setIndex(i);
            }}
          />
          <span className="num text-sm whitespace-nowrap text-ink-100" data-testid="replay-time">
            {formatFixed((frame?.t ?? t0) - t0, 2)} / {formatFixed(tEnd - t0, 2)} s
          </span>
        </section>
      }
    />
  );
}
