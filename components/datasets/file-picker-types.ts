import type { PickedFile } from "../../hooks/use-datasets";

/** Props shared by the web and native file pickers. */
export interface FilePickerProps {
  /** Words of the choose button, e.g. "Choose a file". */
  label: string;
  /** File types offered by the browser's chooser (an `accept` list). */
  accept: string;
  file: PickedFile | null;
  onPick: (file: PickedFile) => void;
  disabled?: boolean;
  testID?: string;
}
