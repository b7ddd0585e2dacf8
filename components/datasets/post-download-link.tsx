/**
 * A download on a phone or tablet app of a file drawn from a posted
 * question (the planner's power curve): posts the question and hands the
 * answer to the system's share sheet as a data address, so it can be saved
 * or sent on.
 */
import { useState } from "react";
import { Share } from "react-native";
import { Button } from "../ui";
import type { PostDownloadLinkProps } from "./post-download-link-types";

function dataAddress(blob: Blob): Promise<string> {
  return new Promise((resolve, reject) => {
    const reader = new FileReader();
    reader.onload = () => resolve(String(reader.result));
    reader.onerror = () => reject(reader.error ?? new Error("the file could not be read"));
    reader.readAsDataURL(blob);
  });
}

export function PostDownloadLink(props: PostDownloadLinkProps) {
  const [busy, setBusy] = useState(false);
  const download = () => {
    setBusy(true);
    props
      .fetchFile()
      .then(dataAddress)
      .then((url) => Share.share({ url, title: props.fileName }))
      .then(
        () => props.onError?.(null),
        (error: Error) => props.onError?.(error),
      )
      .finally(() => setBusy(false));
  };
  return (
    <Button
      label={props.label}
      variant="secondary"
      busy={busy}
      testID={props.testID}
      onPress={download}
    />
  );
}
