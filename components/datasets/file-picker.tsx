/**
 * Choosing a file on a phone or tablet app: the native builds carry no
 * document picker yet, so they say where uploads are done (the web app);
 * everything else on the Data screen works the same.
 */
import type { FilePickerProps } from "./file-picker-types";
import { Notice } from "../ui";

export function FilePicker(props: FilePickerProps) {
  return (
    <Notice testID={props.testID}>
      Uploading files is done in the web app; open this study in a browser to choose a file.
    </Notice>
  );
}
