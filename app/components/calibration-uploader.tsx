import { useEffect, useState } from "react";
import Uppy from "@uppy/core";
import XHRUpload from "@uppy/xhr-upload";
import Dashboard from "@uppy/react/dashboard";
import { useRevalidator } from "react-router";

interface UploadBody {
  error?: { message: string };
  [key: string]: unknown;
}

/**
 * Photos and certificates for a calibration record, sent one file per request to the attachment
 * route, which checks each by its content; the route's refusal message is shown per file.
 */
export function CalibrationUploader({ calibrationId }: { calibrationId: number }) {
  const revalidator = useRevalidator();
  const [uppy] = useState(() =>
    new Uppy<Record<string, never>, UploadBody>({
      autoProceed: false,
      restrictions: { maxFileSize: 20 * 1024 * 1024, allowedFileTypes: ["image/*", ".pdf", "application/pdf"] },
    }).use(XHRUpload, { endpoint: `/api/v1/calibrations/${calibrationId}/attachments`, fieldName: "file", formData: true, limit: 2 }),
  );
  const [problems, setProblems] = useState<string[]>([]);
  useEffect(() => {
    const onError = (file: { name?: string } | undefined, error: { message?: string }, response?: { body?: UploadBody }) => {
      const message = response?.body?.error?.message ?? error?.message ?? "refused";
      const name = file?.name ?? "A file";
      // The server's message may name the file already; it is said once.
      setProblems((p) => [...p, message.includes(name) ? message : `${name}: ${message}`]);
    };
    // The revalidation reports its own failures through the route; nothing here waits for it.
    const onComplete = () => void revalidator.revalidate();
    uppy.on("upload-error", onError);
    uppy.on("complete", onComplete);
    return () => {
      uppy.off("upload-error", onError);
      uppy.off("complete", onComplete);
    };
  }, [uppy, revalidator]);
  return (
    <div className="flex flex-col gap-3">
      <Dashboard
        uppy={uppy}
        height={260}
        width="100%"
        proudlyDisplayPoweredByUppy={false}
        note="Photos (JPEG, PNG, WebP, TIFF) or PDF certificates, up to 20 MB each."
        locale={{ strings: { dropPasteFiles: "Drop photos or certificates here, or %{browseFiles}", browseFiles: "choose files" } }}
      />
      {problems.length ? (
        <ul className="rounded-card border-l-8 border-disagrees-ink bg-disagrees-bg px-4 py-3 text-disagrees-ink" role="alert">
          {problems.map((p, i) => (
            <li key={i}>{p}</li>
          ))}
        </ul>
      ) : null}
    </div>
  );
}
