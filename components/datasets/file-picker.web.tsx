/**
 * Choosing a file in the browser: a hidden file input opened by a button,
 * with the chosen file's name and size shown beside it. The input is
 * cleared after each choice so the same file can be chosen again.
 */
import { useRef } from "react";
import { StyleSheet, View } from "react-native";
import type { PickedFile } from "../../hooks/use-datasets";
import { palette, space } from "../theme";
import { Button, Txt } from "../ui";
import { formatBytes } from "./dataset-format";
import type { FilePickerProps } from "./file-picker-types";

export function FilePicker(props: FilePickerProps) {
  const input = useRef<HTMLInputElement>(null);
  return (
    <View style={styles.root}>
      <input
        ref={input}
        type="file"
        accept={props.accept}
        aria-label={props.label}
        data-testid={props.testID}
        style={{ display: "none" }}
        onChange={(event) => {
          const file = event.currentTarget.files?.[0];
          const picked: PickedFile | null = file
            ? { name: file.name, size: file.size, blob: file }
            : null;
          event.currentTarget.value = "";
          if (picked) props.onPick(picked);
        }}
      />
      <Button
        label={props.file ? "Choose another file" : props.label}
        variant="secondary"
        disabled={props.disabled}
        onPress={() => input.current?.click()}
      />
      {props.file ? (
        <Txt
          kind="small"
          style={styles.chosen}
          testID={props.testID ? `${props.testID}-chosen` : undefined}
        >
          {props.file.name} · {formatBytes(props.file.size)}
        </Txt>
      ) : (
        <Txt kind="small" style={styles.none}>
          No file chosen. CSV or TSV (comma, tab or semicolon), UTF-8.
        </Txt>
      )}
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.xs, alignItems: "flex-start" },
  chosen: { color: palette.ink },
  none: { color: palette.muted },
});
