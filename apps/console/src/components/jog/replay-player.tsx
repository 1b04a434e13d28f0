import { useEffect, useMemo, useRef, useState } from "react";
import { Pause, Play } from "lucide-react";
import type { Arm, ProfileParams, RecordedFrame } from "@jogwright/shared";
import { Button } from "../ui/button.tsx";
import { cn } from "../../lib/cn.ts";
import { formatFixed } from "../../lib/format.ts";
import { DriveWorkspace } from "./drive-workspace.tsx";
import { countMarkers, extractReplayMarkers, type ReplayMarker, type ReplayMarkerKind } from "./replay-markers.ts";
import { ReplaySource } from "./replay-source.ts";

/**
 * Frames played back in the drive page's workspace (3D view, panels, charts): a timeline to scrub, with
 * the session's events marked on it (stops, the singularity guard, binding limits; replay-markers.ts), and
 * play/pause at a chosen speed. The recordings page replays a live session's frames; the bench replays a
 * run (its series as frames).
 */

/** Playback speeds offered, × real time. */
export const PLAYBACK_RATES = [0.25, 0.5, 1, 2, 4] as const;

const MARKER_STYLE: Record<ReplayMarkerKind, { className: string; word: string }> = {
  stop: { className: "bg-stop-400 h-4", word: "stops" },
  guard: { className: "bg-warn-400 h-4", word: "guard" },
  binding: { className: "bg-iris-300 h-2.5", word: "binding limits" },
};

export function ReplayPlayer({ arm, frames, params }: { arm: Arm; frames: readonly RecordedFrame[]; params: ProfileParams | null }) {
  const source = useMemo(() => {
    const s = new ReplaySource(frames, arm.model.joints.map((j) => j.type));
    s.seek(0);
    return s;
  }, [frames, arm]);
  const markers = useMemo(() => extractReplayMarkers(frames), [frames]);
  const [index, setIndex] = useState(0);
  const [isPlaying, setPlaying] = useState(false);
  const [rate, setRate] = useState<number>(1);
  const rateRef = useRef(rate);
  const playRef = useRef<{ startWallMs: number; startT: number } | null>(null);
  const t0 = frames[0]!.t;
  const tEnd = frames[frames.length - 1]!.t;

  // A new speed takes effect from where the replay is now: re-anchor the clock at the current frame.
  useEffect(() => {
    rateRef.current = rate;
    const play = playRef.current;
    if (play) playRef.current = { startWallMs: performance.now(), startT: source.frameAt(source.index)?.t ?? play.startT };
  }, [rate, source]);

  // Playback at `rate` × real time: the wall clock picks the frame; React state follows at ~15 Hz for the panels.
  useEffect(() => {
    if (!isPlaying) return;
    let raf = 0;
    let lastPublish = 0;
    const startIndex = source.index >= frames.length - 1 ? 0 : source.index;
    playRef.current = { startWallMs: performance.now(), startT: frames[startIndex]!.t };
    const step = (now: number) => {
      const play = playRef.current!;
      const t = play.startT + ((now - play.startWallMs) / 1000) * rateRef.current;
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
    return () => {
      cancelAnimationFrame(raf);
      playRef.current = null;
    };
  }, [isPlaying, source, frames]);

  function seek(i: number) {
    setPlaying(false);
    source.seek(i);
    setIndex(i);
  }

  const frame = source.frameAt(index);
  return (
    <DriveWorkspace
      arm={arm}
      params={params}
      frame={frame}
      source={source}
      header={
        <ReplayTransport
          isPlaying={isPlaying}
          onPlayToggle={() => setPlaying((p) => !p)}
          rate={rate}
          onRateChange={setRate}
          markers={markers}
          t0={t0}
          tEnd={tEnd}
          index={index}
          lastIndex={frames.length - 1}
          t={frame?.t ?? t0}
          onSeek={seek}
        />
      }
    />
  );
}

/** The replay's transport: play/pause, speed, the timeline with its marks, the time, and the marks' legend. */
function ReplayTransport({ isPlaying, onPlayToggle, rate, onRateChange, markers, t0, tEnd, index, lastIndex, t, onSeek }: {
  isPlaying: boolean;
  onPlayToggle: () => void;
  rate: number;
  onRateChange: (rate: number) => void;
  markers: readonly ReplayMarker[];
  t0: number;
  tEnd: number;
  /** The index of the frame shown. */
  index: number;
  /** The index of the recording's last frame (the timeline's end). */
  lastIndex: number;
  /** The shown frame's time (s, on the recording's clock). */
  t: number;
  onSeek: (index: number) => void;
}) {
  const counts = countMarkers(markers);
  return (
    <section aria-label="Replay" className="flex flex-col gap-2 rounded-lg border border-ink-700 bg-ink-850 p-3">
      <div className="flex items-center gap-3">
        <Button variant="primary" onClick={onPlayToggle} aria-label={isPlaying ? "Pause" : "Play"}>
          {isPlaying ? <Pause aria-hidden className="size-4" /> : <Play aria-hidden className="size-4" />}
          {isPlaying ? "Pause" : "Play"}
        </Button>
        <label className="flex items-center gap-2 text-sm text-ink-300">
          Speed
          <select
            aria-label="Playback speed"
            data-testid="replay-speed"
            value={rate}
            onChange={(event) => onRateChange(Number(event.target.value))}
            className="h-9 rounded-md border border-ink-600 bg-ink-800 px-2 text-sm text-ink-100 hover:border-ink-400"
          >
            {PLAYBACK_RATES.map((r) => (
              <option key={r} value={r}>
                {r}×
              </option>
            ))}
          </select>
        </label>
        <div className="flex flex-1 flex-col gap-0.5">
          <MarkerTrack markers={markers} t0={t0} tEnd={tEnd} onSeek={onSeek} />
          <input
            type="range"
            min={0}
            max={lastIndex}
            step={1}
            value={index}
            aria-label="Timeline"
            className="w-full accent-iris-400"
            onChange={(event) => onSeek(Number(event.target.value))}
          />
        </div>
        <span className="num text-sm whitespace-nowrap text-ink-100" data-testid="replay-time">
          {formatFixed(t - t0, 2)} / {formatFixed(tEnd - t0, 2)} s
        </span>
      </div>
      <p className="flex flex-wrap gap-x-4 gap-y-1 text-xs text-ink-300" data-testid="replay-marker-legend">
        {(Object.keys(MARKER_STYLE) as ReplayMarkerKind[]).map((kind) => (
          <span key={kind} className="inline-flex items-center gap-1.5">
            <span aria-hidden className={cn("inline-block w-1 rounded-sm", MARKER_STYLE[kind].className)} />
            <span className="num text-ink-100">{counts[kind]}</span> {MARKER_STYLE[kind].word}
          </span>
        ))}
        <span className="text-ink-400">Click a mark to go to it.</span>
      </p>
    </section>
  );
}

/**
 * The marks above the timeline, each where its frame lies in time. The range input's thumb centre travels
 * from half a thumb in from each end, so the track is inset by the same 8 px to line the marks up with it.
 */
function MarkerTrack({ markers, t0, tEnd, onSeek }: { markers: readonly ReplayMarker[]; t0: number; tEnd: number; onSeek: (index: number) => void }) {
  const span = tEnd - t0 || 1;
  return (
    <div className="relative mx-2 h-4" data-testid="replay-markers">
      {markers.map((m) => (
        <button
          key={`${m.kind}-${m.index}`}
          type="button"
          title={`${m.label} at ${formatFixed(m.t - t0, 2)} s`}
          aria-label={`${m.label} at ${formatFixed(m.t - t0, 2)} s`}
          data-testid="replay-marker"
          data-kind={m.kind}
          onClick={() => onSeek(m.index)}
          className={cn("absolute bottom-0 w-1 -translate-x-1/2 rounded-sm hover:brightness-125", MARKER_STYLE[m.kind].className)}
          style={{ left: `${((m.t - t0) / span) * 100}%` }}
        />
      ))}
    </div>
  );
}
