/**
 * Uploading a new version (Owners and Analysts): choose the kind, pick a
 * file, set the reading options, upload — the server answers with a preview
 * and nothing is stored until the preview is confirmed. A refused file is
 * shown as its list of problems, each naming the row and column.
 */
import { useState } from "react";
import { StyleSheet, View } from "react-native";
import {
  type DatasetPreview,
  type DatasetVersion,
  type PickedFile,
  useUploadDataset,
} from "../../hooks/use-datasets";
import { Choice } from "../choice";
import { space } from "../theme";
import { Button, Card, Field, Heading, Notice, Txt } from "../ui";
import { kindLabel } from "./dataset-format";
import { FilePicker } from "./file-picker";
import { ProblemList } from "./problem-list";
import { type UploadFormValues, uploadOptions } from "./upload-decisions";
import { UploadPreview } from "./upload-preview";

const kindOptions = [
  {
    value: "brain",
    label: "Brain table",
    hint: "contrast values per participant and region, optional standard errors and session",
  },
  {
    value: "participants",
    label: "Participant sheet",
    hint: "one row per participant: age, group, scores…",
  },
] as const;

const layoutOptions = [
  {
    value: "detect",
    label: "Detect",
    hint: "long when the file has region and value columns, else wide",
  },
  { value: "wide", label: "Wide", hint: "one column per region" },
  {
    value: "long",
    label: "Long",
    hint: "one row per participant and region: id, region, value, optional se",
  },
] as const;

const ACCEPT = ".csv,.tsv,.txt,text/csv,text/tab-separated-values,text/plain";

interface FormState extends UploadFormValues {
  file: PickedFile | null;
}

const emptyForm: FormState = {
  kind: null,
  file: null,
  idColumn: "",
  seSuffix: "_se",
  layout: "detect",
  sessionColumn: "",
};

export function UploadPanel(props: { studyId: string }) {
  const [form, setForm] = useState<FormState>(emptyForm);
  const [preview, setPreview] = useState<DatasetPreview | null>(null);
  const [stored, setStored] = useState<DatasetVersion | null>(null);
  const upload = useUploadDataset(props.studyId);
  const set = (changes: Partial<FormState>) => setForm((f) => ({ ...f, ...changes }));

  if (preview) {
    return (
      <UploadPreview
        key={preview.id}
        studyId={props.studyId}
        preview={preview}
        onConfirmed={(version) => {
          setStored(version);
          setPreview(null);
          setForm(emptyForm);
          upload.reset();
        }}
        onCancel={() => {
          setPreview(null);
          upload.reset();
        }}
      />
    );
  }

  const submit = () => {
    if (!form.kind || !form.file) return;
    setStored(null);
    upload.mutate(
      { kind: form.kind, file: form.file, options: uploadOptions(form) },
      { onSuccess: setPreview },
    );
  };

  return (
    <Card testID="upload">
      <Heading level={2}>Upload a new version</Heading>
      <Txt kind="small">
        A new upload of the same kind becomes the next version; earlier versions stay readable and
        fits keep the versions they used. You see a preview before anything is stored.
      </Txt>
      {stored ? (
        <Notice tone="success" testID="upload-stored">
          Stored {stored.fileName} as version {stored.version} of the{" "}
          {kindLabel[stored.kind].toLowerCase()}.
        </Notice>
      ) : null}
      <Choice
        label="Kind"
        options={kindOptions}
        value={form.kind}
        onChange={(kind) => set({ kind })}
        testID="upload-kind"
      />
      {form.kind ? (
        <Txt kind="caption">{kindOptions.find((o) => o.value === form.kind)?.hint}</Txt>
      ) : null}
      <FilePicker
        label="Choose a file"
        accept={ACCEPT}
        file={form.file}
        onPick={(file) => set({ file })}
        testID="upload-file"
      />
      {form.kind ? (
        <View style={styles.options}>
          <Field
            label="Participant id column"
            value={form.idColumn}
            onChangeText={(idColumn) => set({ idColumn })}
            placeholder="participant_id"
            autoCapitalize="none"
            autoCorrect={false}
            hint="Leave empty for participant_id (as the BIDS participants file names it); without such a column, the first column is taken."
            testID="upload-id-column"
          />
          {form.kind === "brain" ? (
            <>
              <Choice
                label="Layout"
                options={layoutOptions}
                value={form.layout}
                onChange={(layout) => set({ layout })}
                testID="upload-layout"
              />
              <Field
                label="Standard-error suffix"
                value={form.seSuffix}
                onChangeText={(seSuffix) => set({ seSuffix })}
                autoCapitalize="none"
                autoCorrect={false}
                hint={
                  "A column named region + suffix (e.g. “L_insula_se”) holds that region’s standard errors."
                }
                error={form.seSuffix === "" ? "The suffix must not be empty." : null}
                testID="upload-se-suffix"
              />
              <Field
                label="Session column"
                value={form.sessionColumn}
                onChangeText={(sessionColumn) => set({ sessionColumn })}
                placeholder="session"
                autoCapitalize="none"
                autoCorrect={false}
                hint={
                  "Leave empty to use a column named “session” when there is one; write none when the table has no sessions."
                }
                testID="upload-session-column"
              />
            </>
          ) : null}
        </View>
      ) : null}
      {upload.error ? (
        <ProblemList
          error={upload.error}
          title="The file was not accepted"
          testID="upload-problems"
        />
      ) : null}
      <Button
        label="Upload and preview"
        onPress={submit}
        busy={upload.isPending}
        disabled={!form.kind || !form.file || (form.kind === "brain" && form.seSuffix === "")}
        style={styles.submit}
        testID="upload-submit"
      />
    </Card>
  );
}

const styles = StyleSheet.create({
  options: { gap: space.md },
  submit: { alignSelf: "flex-start" },
});
