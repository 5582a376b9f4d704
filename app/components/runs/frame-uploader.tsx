import { useEffect, useRef, useState } from "react";
import Uppy from "@uppy/core";
import XHRUpload from "@uppy/xhr-upload";
import { useRevalidator } from "react-router";
import { cutVideoIntoFrames } from "./video-frames";
import { uploadLimits, acceptedFrameTypes, frameUploadKindOf, maxUploadFileBytes } from "~/lib/upload-limits";
import { Button } from "~/components/ui/button";
import { formatFixed } from "~/lib/number-format";
import { streamPlan, type StreamPlan } from "~/lib/frame-stream";
import { runLabel } from "~/lib/runs";
import { CarryOverChoice, StreamNotice } from "./stream-notice";

/**
 * A frame cut from a video carries its own time in s; a still carries none. A still of a stream
 * declares its place (Decision 61); carryOverSetup opts in to the camera's last view setup (Decision 67).
 * Empty means "not sent".
 */
type Meta = { timeS: string; frameNumber: string; expectedFrames: string; carryOverSetup: string; displayName?: string };
type Outcome = { id: string; name: string; state: "waiting" | "sent" | "duplicate" | "rejected"; message?: string; frames?: number; bytes: number };

/** A refusal names its file once: the server's own message often starts with the name already. */
export function outcomeLine(name: string, message: string | undefined) {
  if (!message) return name;
  return message.includes(name) ? message : `${name}: ${message}`;
}

/** "12.3 MB" for the progress line; bytes in decimal megabytes, as file browsers show them. */
const megabytes = (bytes: number) => `${formatFixed(bytes / 1e6, 1)} MB`;

/**
 * Refused here, before a byte is sent, when the file is over what the server takes (it checks
 * again): an image over the frame limit, a ZIP over the ZIP limit. By name only to pick the limit;
 * the server judges the content.
 */
export function tooLargeToSend(file: { name: string; size: number }): string | null {
  const zip = frameUploadKindOf(file.name) === "zip";
  const limit = maxUploadFileBytes(frameUploadKindOf(file.name));
  if (file.size <= limit) return null;
  return `${file.name} is ${megabytes(file.size)}; ${zip ? "a ZIP" : "one frame"} may be at most ${limit / 1024 / 1024} MB. Not sent.`;
}

interface ResponseBody {
  accepted?: { name: string; duplicate: boolean }[];
  rejected?: { name: string; message: string }[];
  error?: { message: string };
  frameCount?: number;
  setupCarriedOver?: { carried: true; fromRunId: number } | { carried: false; message: string; alreadySet?: boolean };
  [key: string]: unknown;
}

const shortStack = "a still was refused, so the stack will not reach the count declared and tracking does not start by itself";

/** The run as a stream sees it: frames already in, its own setup, the camera's last setup it may carry over. */
export interface StreamStart {
  framesInRun: number;
  hasSetup: boolean;
  offer: { fromRunId: number; width: number; height: number } | null;
}

/**
 * Tankside's own drop zone on Uppy: one file per request to the frame route. Images and ZIPs go
 * as they are; a video is first cut into frames here in the browser. A drop of stills on an empty
 * run with a view setup (its own or carried over) is sent as a stream (streamPlan): each still
 * declares its place, the still background's frames go first, and the last one starts tracking.
 */
export function FrameUploader({ runId, frameRate, disabled, start }: { runId: number; frameRate: number; disabled?: boolean; start: StreamStart }) {
  const revalidator = useRevalidator();
  const endpoint = `/api/v1/runs/${runId}/frames`;
  const [uppy] = useState(() =>
    new Uppy<Meta, ResponseBody>({ autoProceed: false, allowMultipleUploadBatches: true }).use(XHRUpload, {
      endpoint,
      fieldName: "file",
      formData: true,
      limit: 2,
      allowedMetaFields: ["timeS", "frameNumber", "expectedFrames", "carryOverSetup"],
      timeout: 0,
      // A refusal (4xx) is final and carries the reason; only a lost connection or a server fault is worth retrying.
      shouldRetry: (xhr: XMLHttpRequest) => xhr.status === 0 || xhr.status >= 500,
      onAfterResponse: (xhr: XMLHttpRequest) => {
        if (xhr.status < 400) return;
        let message = `The server answered ${xhr.status}.`;
        try {
          const body = JSON.parse(xhr.responseText) as ResponseBody;
          if (body.error?.message) message = body.error.message;
        } catch {
          // not JSON: keep the status
        }
        throw new Error(message);
      },
    }),
  );
  const [outcomes, setOutcomes] = useState<Outcome[]>([]);
  const [busy, setBusy] = useState(false);
  const [cutting, setCutting] = useState<{ name: string; done: number; total: number } | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const [sentBytes, setSentBytes] = useState<Record<string, number>>({});
  const [over, setOver] = useState(false);
  const [plan, setPlan] = useState<StreamPlan | null>(null);
  const [carried, setCarried] = useState<string | null>(null);
  // Opt-in, on by default when there is a setup to carry over.
  const [carry, setCarry] = useState(Boolean(start.offer));
  const carryOver = !start.hasSetup && start.offer !== null && carry;
  const input = useRef<HTMLInputElement>(null);

  useEffect(() => {
    const update = (id: string, patch: Partial<Outcome>) => setOutcomes((list) => list.map((o) => (o.id === id ? { ...o, ...patch } : o)));
    const onSuccess = (file: { id: string } | undefined, response: { body?: ResponseBody; status: number }) => {
      if (!file) return;
      const body = response.body ?? {};
      const c = body.setupCarriedOver;
      if (c?.carried) setCarried(`The view setup of ${runLabel(c.fromRunId)} was carried over to this run.`);
      else if (c && !c.alreadySet) {
        // Without a setup the frames wait for one: say so, and why.
        setCarried(c.message);
        setPlan({ stream: false, why: "the camera's last view setup could not be carried over" });
      }
      const rejected = body.rejected ?? [];
      const accepted = body.accepted ?? [];
      const dup = accepted.length > 0 && accepted.every((a) => a.duplicate);
      update(file.id, {
        state: dup ? "duplicate" : "sent",
        frames: accepted.filter((a) => !a.duplicate).length,
        message: dup
          ? "Already in the stack; ignored."
          : rejected.length
            ? `${accepted.length} frame(s) taken; ${rejected.length} refused: ${rejected.map((r) => `${r.name} — ${r.message}`).join("; ")}`
            : accepted.length > 1
              ? `${accepted.length} frames taken from the ZIP.`
              : undefined,
      });
    };
    const onError = (file: { id: string } | undefined, error: { message?: string }, response?: { body?: ResponseBody; status: number }) => {
      if (!file) return;
      update(file.id, { state: "rejected", message: error?.message ?? response?.body?.error?.message ?? "Refused." });
      // A stream's stack now ends short of its declared count: the frames in are searched, but the fit waits to be started.
      setPlan((p) => (p?.stream ? { stream: false, why: shortStack } : p));
    };
    const onComplete = () => {
      setBusy(false);
      uppy.clear();
      void revalidator.revalidate();
    };
    // Bytes sent so far, per file: a ZIP of hundreds of frames is one long request.
    const onProgress = (file: { id: string } | undefined, progress: { bytesUploaded: number }) => {
      if (file) setSentBytes((m) => ({ ...m, [file.id]: progress.bytesUploaded }));
    };
    uppy.on("upload-progress", onProgress);
    uppy.on("upload-success", onSuccess);
    uppy.on("upload-error", onError);
    uppy.on("complete", onComplete);
    return () => {
      uppy.off("upload-progress", onProgress);
      uppy.off("upload-success", onSuccess);
      uppy.off("upload-error", onError);
      uppy.off("complete", onComplete);
    };
  }, [uppy, revalidator]);

  useEffect(() => () => uppy.destroy(), [uppy]);

  async function take(files: File[]) {
    setProblem(null);
    if (!files.length) return;
    setBusy(true);
    const queued: Outcome[] = [];
    const plan = streamPlan(
      files.map((f) => ({ name: f.name, video: f.type.startsWith("video/") })),
      { framesInRun: start.framesInRun, setup: start.hasSetup ? "present" : carryOver ? "carried over" : "none" },
    );
    setPlan(plan);
    setCarried(null);
    const carryMeta = carryOver ? "yes" : "";
    const sendAs = { timeS: "", frameNumber: "", expectedFrames: "", carryOverSetup: carryMeta };
    try {
      if (plan.stream) {
        for (const { file: index, frameNumber } of plan.sends) {
          const file = files[index]!;
          const refusal = tooLargeToSend(file);
          if (refusal) {
            queued.push({ id: `refused-${file.name}-${Date.now()}`, name: file.name, state: "rejected", message: refusal, bytes: 0 });
            continue;
          }
          const meta = { ...sendAs, frameNumber: String(frameNumber), expectedFrames: String(plan.expectedFrames) };
          const id = uppy.addFile({ name: file.name, type: file.type || "application/octet-stream", data: file, meta });
          queued.push({ id, name: file.name, state: "waiting", bytes: file.size });
        }
      }
      for (const file of plan.stream ? [] : files) {
        if (file.type.startsWith("video/")) {
          setCutting({ name: file.name, done: 0, total: 0 });
          const frames = await cutVideoIntoFrames(file, uploadLimits.maxFramesPerRun, (done, total) => setCutting({ name: file.name, done, total }));
          setCutting(null);
          for (const f of frames) {
            const id = uppy.addFile({ name: f.file.name, type: "image/jpeg", data: f.file, meta: { ...sendAs, timeS: String(f.timeS) } });
            queued.push({ id, name: f.file.name, state: "waiting", bytes: f.file.size });
          }
        } else {
          const refusal = tooLargeToSend(file);
          if (refusal) {
            queued.push({ id: `refused-${file.name}-${Date.now()}`, name: file.name, state: "rejected", message: refusal, bytes: 0 });
            continue;
          }
          const id = uppy.addFile({ name: file.name, type: file.type || "application/octet-stream", data: file, meta: sendAs });
          // The server takes a ZIP's larger limit only when the upload says it is one.
          if (frameUploadKindOf(file.name) === "zip") uppy.setFileState(id, { xhrUpload: { endpoint: `${endpoint}?kind=zip` } });
          queued.push({ id, name: file.name, state: "waiting", bytes: file.size });
        }
      }
      if (plan.stream && queued.some((o) => o.state === "rejected")) setPlan({ stream: false, why: shortStack });
      setOutcomes((list) => [...queued, ...list].slice(0, 500));
      setSentBytes({});
      if (uppy.getFiles().length === 0) {
        setBusy(false);
        return;
      }
      await uppy.upload();
    } catch (err) {
      setCutting(null);
      setBusy(false);
      setProblem(err instanceof Error ? err.message : String(err));
    }
  }

  const framesTaken = outcomes.reduce((n, o) => n + (o.state === "sent" ? (o.frames ?? 1) : 0), 0);
  const rejected = outcomes.filter((o) => o.state === "rejected");
  const waitingFiles = outcomes.filter((o) => o.state === "waiting");
  const waiting = waitingFiles.length;
  const bytesTotal = waitingFiles.reduce((n, o) => n + o.bytes, 0);
  const bytesSent = waitingFiles.reduce((n, o) => n + Math.min(o.bytes, sentBytes[o.id] ?? 0), 0);

  return (
    <div className="flex flex-col gap-3">
      {!start.hasSetup && start.offer ? <CarryOverChoice offer={start.offer} checked={carry} disabled={disabled || busy} onChange={setCarry} /> : null}
      <div data-testid="stream-notice">
        <StreamNotice plan={plan} framesInRun={start.framesInRun} setup={start.hasSetup ? "present" : carryOver ? "carried over" : "none"} />
      </div>
      {carried ? (
        <p role="status" data-testid="setup-carried">
          {carried}
        </p>
      ) : null}
      <div
        onDragOver={(e) => {
          e.preventDefault();
          setOver(true);
        }}
        onDragLeave={() => setOver(false)}
        onDrop={(e) => {
          e.preventDefault();
          setOver(false);
          if (!disabled && !busy) void take([...e.dataTransfer.files]);
        }}
        className={`flex flex-col items-center gap-3 rounded-card border-4 border-dashed p-8 text-center ${over ? "border-tank-600 bg-tank-50" : "border-line-strong bg-paper"}`}
        data-testid="frame-drop-zone"
      >
        <p className="text-lg font-bold">Drop the frame stack here</p>
        <p className="text-muted">
          JPEG, PNG, TIFF or WebP frames, a ZIP of them, or a video (cut here into its own frames, each keeping its time in the video). Stills are ordered by
          name (frame_2 comes before frame_10) and spaced at {frameRate} frames/s.
        </p>
        <input
          ref={input}
          type="file"
          multiple
          accept={[...acceptedFrameTypes, "video/*"].join(",")}
          className="sr-only"
          aria-label="Choose frames, a ZIP or a video"
          onChange={(e) => {
            void take([...(e.target.files ?? [])]);
            e.target.value = "";
          }}
          disabled={disabled || busy}
        />
        <Button type="button" tone="plain" onClick={() => input.current?.click()} disabled={disabled || busy}>
          Choose files
        </Button>
      </div>
      {cutting ? (
        <div>
          <p>
            Cutting {cutting.name} into frames… {cutting.done} of {cutting.total || "?"}
          </p>
          <progress className="h-4 w-full" max={cutting.total || 1} value={cutting.done} />
        </div>
      ) : null}
      {outcomes.length ? (
        <div aria-live="polite">
          <p className="font-bold" data-testid="upload-summary">
            {waiting ? `Sending ${waiting} file(s): ${megabytes(bytesSent)} of ${megabytes(bytesTotal)}… ` : ""}
            {framesTaken} {framesTaken === 1 ? "frame" : "frames"} taken
            {rejected.length ? `, ${rejected.length} ${rejected.length === 1 ? "file" : "files"} refused` : ""}
          </p>
          {busy && waiting ? <progress className="h-4 w-full" aria-label="Bytes sent" max={bytesTotal || 1} value={bytesSent} /> : null}
          <ul className="mt-2 flex max-h-64 flex-col gap-1 overflow-auto" data-testid="upload-outcomes">
            {outcomes
              .filter((o) => o.state !== "sent" || o.message)
              .map((o) => (
                <li key={o.id} className={o.state === "rejected" ? "font-bold text-disagrees-ink" : "text-muted"}>
                  {o.state === "waiting" ? `${o.name}: waiting` : outcomeLine(o.name, o.message)}
                </li>
              ))}
          </ul>
        </div>
      ) : null}
      {problem ? (
        <p role="alert" className="font-bold text-disagrees-ink">
          {problem}
        </p>
      ) : null}
    </div>
  );
}
