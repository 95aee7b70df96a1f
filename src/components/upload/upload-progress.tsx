"use client";
import type { UploadState } from "./use-resumable-upload";

export function formatBytes(n: number): string {
  if (n < 1024) return `${n} B`;
  const units = ["KB", "MB", "GB", "TB"];
  let v = n / 1024;
  let i = 0;
  while (v >= 1024 && i < units.length - 1) {
    v /= 1024;
    i++;
  }
  return `${v.toFixed(v < 10 ? 2 : 1)} ${units[i]}`;
}

function formatSeconds(s: number): string {
  if (s < 60) return `${Math.ceil(s)} s`;
  const m = Math.floor(s / 60);
  return m < 60 ? `${m} min ${Math.ceil(s % 60)} s` : `${Math.floor(m / 60)} h ${m % 60} min`;
}

export function UploadProgress({ state }: { state: UploadState }) {
  if (state.phase !== "uploading" && state.phase !== "paused" && state.phase !== "verifying") return null;
  const sent = state.phase === "verifying" ? state.total : state.sent;
  const pct = state.total ? (100 * sent) / state.total : 0;
  return (
    <div className="space-y-1" data-testid="upload-progress">
      <div
        className="h-3 w-full overflow-hidden rounded-full bg-paper-line"
        role="progressbar"
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={Math.round(pct)}
        aria-label="Upload progress"
      >
        <div className="h-full bg-accent transition-[width] duration-300" style={{ width: `${pct}%` }} />
      </div>
      <div className="flex justify-between font-mono text-xs text-ink-soft">
        <span>
          {formatBytes(sent)} of {formatBytes(state.total)} ({pct.toFixed(0)} %)
        </span>
        {state.phase === "verifying" ? (
          <span>checking the TIFF and computing its SHA-256…</span>
        ) : state.phase === "paused" ? (
          <span>paused</span>
        ) : (
          <span>
            {state.bytesPerSecond ? `${formatBytes(state.bytesPerSecond)}/s` : "—"} ·{" "}
            {state.secondsLeft != null ? `${formatSeconds(state.secondsLeft)} left` : "estimating…"}
            {state.resumed ? " · resumed" : ""}
          </span>
        )}
      </div>
    </div>
  );
}
