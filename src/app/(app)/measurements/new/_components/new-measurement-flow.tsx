"use client";
import { useState } from "react";
import type { StackDto } from "@/contracts/stacks";
import { useResumableUpload } from "@/components/upload/use-resumable-upload";
import { UploadProgress, formatBytes } from "@/components/upload/upload-progress";
import { MeasurementForm } from "./measurement-form";

export interface ObjectiveOption {
  id: string;
  name: string;
  na: number;
  immersion: string;
  designImmersionRi: number;
  modality: "widefield" | "confocal" | "spinning-disk" | "two-photon" | "light-sheet";
  defaultPinholeAu: number | null;
}

export interface MediumOption {
  id: string;
  name: string;
  ri: number;
  kind: "library" | "custom";
}

export interface FormPrefill {
  objectiveId?: string;
  purpose?: string;
  medium?: string;
  sampleRi?: number;
  emissionWavelengthNm?: number;
}

export function NewMeasurementFlow({
  initialStack,
  ...props
}: {
  objectives: ObjectiveOption[];
  purposes: string[];
  media: MediumOption[];
  initialStack?: StackDto | null;
  prefill?: FormPrefill;
}) {
  const { state, start, pause, resume, cancel } = useResumableUpload();
  const [file, setFile] = useState<File | null>(null);
  // A stack chosen on its own page (?stack=…) stands until the user uploads another.
  const stack: StackDto | null =
    state.phase === "done" ? state.stack : state.phase === "idle" ? (initialStack ?? null) : null;

  return (
    <div className="grid gap-6 lg:grid-cols-[1fr_2fr]">
      <section className="card space-y-3" aria-labelledby="upload-heading">
        <h2 id="upload-heading">1 · Stack</h2>
        <input
          type="file"
          accept=".tif,.tiff,image/tiff"
          data-testid="stack-file"
          className="block w-full text-sm"
          disabled={state.phase === "uploading" || state.phase === "verifying"}
          onChange={(e) => {
            const f = e.target.files?.[0] ?? null;
            setFile(f);
            if (f) void start(f);
          }}
        />
        <UploadProgress state={state} />
        {state.phase === "uploading" ? (
          <div className="flex gap-2">
            <button type="button" className="btn-quiet" onClick={pause}>
              Pause
            </button>
            <button type="button" className="btn-quiet" onClick={cancel}>
              Cancel
            </button>
          </div>
        ) : null}
        {state.phase === "paused" ? (
          <div className="flex gap-2">
            <button type="button" className="btn" onClick={resume}>
              Resume
            </button>
            <button type="button" className="btn-quiet" onClick={cancel}>
              Cancel
            </button>
          </div>
        ) : null}
        {state.phase === "error" ? (
          <div role="alert" data-testid="upload-error" className="rounded-md bg-bad/5 p-2 text-sm text-bad">
            {state.message}
            {file ? (
              <button type="button" className="btn-quiet ml-2" onClick={() => void start(file)}>
                Try again
              </button>
            ) : null}
          </div>
        ) : null}
        {stack ? (
          <dl className="grid grid-cols-2 gap-x-3 gap-y-1 text-sm" data-testid="stack-facts">
            <dt className="text-ink-soft">File</dt>
            <dd className="truncate">{stack.fileName}</dd>
            <dt className="text-ink-soft">Size</dt>
            <dd className="font-mono">{formatBytes(stack.sizeBytes)}</dd>
            <dt className="text-ink-soft">Dimensions (x × y × z)</dt>
            <dd className="font-mono">
              {stack.width} × {stack.height} × {stack.slices}
            </dd>
            <dt className="text-ink-soft">Channels</dt>
            <dd className="font-mono">{stack.channels}</dd>
            <dt className="text-ink-soft">Sample type</dt>
            <dd className="font-mono">{stack.dtype}</dd>
            <dt className="text-ink-soft">Voxel (µm)</dt>
            <dd className="font-mono">
              {stack.voxelSizeUm
                ? `${stack.voxelSizeUm.x.toFixed(4)} × ${stack.voxelSizeUm.y.toFixed(4)} × ${stack.voxelSizeUm.z.toFixed(4)}`
                : "not in the file"}
            </dd>
            <dt className="text-ink-soft">SHA-256</dt>
            <dd className="truncate font-mono text-xs">{stack.sha256}</dd>
            {stack.duplicate ? (
              <dd className="col-span-2 text-xs text-accent-strong">
                This exact file was uploaded before: the stored stack is reused.
              </dd>
            ) : null}
          </dl>
        ) : (
          <p className="text-xs text-ink-soft">
            Large files upload in 8 MB pieces. If the connection drops or you reload the page, choose the same
            file again and the upload continues where it stopped.
          </p>
        )}
      </section>
      <section className="card" aria-labelledby="form-heading">
        <h2 id="form-heading" className="mb-3">
          2 · What was imaged
        </h2>
        {stack ? (
          <MeasurementForm stack={stack} {...props} />
        ) : (
          <p className="text-sm text-ink-soft">Upload a stack first; the form fills in what the file says.</p>
        )}
      </section>
    </div>
  );
}
