import type { ReactNode } from "react";
import { cn } from "../../lib/cn.ts";

type Tone = "neutral" | "accent" | "ok" | "warn" | "stop";

const tones: Record<Tone, string> = {
  neutral: "border-ink-600 text-ink-300",
  accent: "border-iris-400/50 bg-iris-950 text-iris-300",
  ok: "border-ok-400/50 bg-ok-950 text-ok-400",
  warn: "border-warn-400/50 bg-warn-950 text-warn-400",
  stop: "border-stop-400/50 bg-stop-950 text-stop-400",
};

export function Badge({ tone = "neutral", children }: { tone?: Tone; children: ReactNode }) {
  return (
    <span className={cn("inline-flex items-center rounded-sm border px-1.5 text-xs font-semibold whitespace-nowrap", tones[tone])}>
      {children}
    </span>
  );
}
