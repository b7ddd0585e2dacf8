/**
 * A download in the browser of a file drawn from a posted question (the
 * planner's power curve): a button that looks like every other download
 * (download-link.web.tsx), posts the question, and saves the answer under
 * its file name through a temporary object address; the page stays where
 * it is.
 */
import { useState } from "react";
import { downloadLinkStyle } from "./download-link.web";
import type { PostDownloadLinkProps } from "./post-download-link-types";

function save(blob: Blob, fileName: string): void {
  const url = URL.createObjectURL(blob);
  const link = document.createElement("a");
  link.href = url;
  link.download = fileName;
  document.body.appendChild(link);
  link.click();
  link.remove();
  // the browser has taken the file by the next turn; a minute leaves slow machines room
  setTimeout(() => URL.revokeObjectURL(url), 60_000);
}

export function PostDownloadLink(props: PostDownloadLinkProps) {
  const [busy, setBusy] = useState(false);
  const download = () => {
    if (busy) return;
    setBusy(true);
    props
      .fetchFile()
      .then(
        (blob) => {
          save(blob, props.fileName);
          props.onError?.(null);
        },
        (error: Error) => props.onError?.(error),
      )
      .finally(() => setBusy(false));
  };
  return (
    <button
      type="button"
      onClick={download}
      aria-busy={busy}
      data-testid={props.testID}
      style={{
        ...downloadLinkStyle,
        cursor: busy ? "progress" : "pointer",
        opacity: busy ? 0.6 : 1,
      }}
    >
      {props.label}
    </button>
  );
}
