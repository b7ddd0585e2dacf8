/**
 * Restoring a set-aside participant: a button that opens a required reason
 * field, then restores (recorded in Activity with the reason). Used by the
 * study's Set aside section and by the participant card of a fit's region.
 */
import { useState } from "react";
import { StyleSheet, View } from "react-native";
import { useRestoreSetAside, type SetAsideView } from "../../hooks/use-set-asides";
import { participantWords } from "../../contract/set-aside-words";
import { space } from "../theme";
import { Button, Field, Notice } from "../ui";
import { mutateThen } from "../../hooks/mutate-then";

export function RestoreForm(props: {
  studyId: string;
  setAside: SetAsideView;
  onRestored?: () => void;
}) {
  const [open, setOpen] = useState(false);
  const [reason, setReason] = useState("");
  const restore = useRestoreSetAside(props.studyId);
  const who = participantWords(props.setAside.participant);
  if (!open) {
    return (
      <Button
        label="Restore"
        variant="secondary"
        onPress={() => setOpen(true)}
        accessibilityLabel={`Restore ${who}`}
        testID="restore"
      />
    );
  }
  return (
    <View style={styles.root} testID="restore-form">
      <Field
        label="Reason for restoring (required)"
        value={reason}
        onChangeText={setReason}
        placeholder="e.g. motion rechecked: within the preregistered limit"
        testID="restore-reason"
      />
      {restore.error ? <Notice tone="danger">{restore.error.message}</Notice> : null}
      <View style={styles.actions}>
        <Button
          label="Restore and log"
          disabled={reason.trim().length === 0}
          busy={restore.isPending}
          onPress={() =>
            mutateThen(restore, { setAsideId: props.setAside.id, reason: reason.trim() }, () =>
              props.onRestored?.(),
            )
          }
          accessibilityLabel={`Restore ${who} and log the reason`}
          testID="restore-confirm"
        />
        <Button label="Cancel" variant="quiet" onPress={() => setOpen(false)} />
      </View>
    </View>
  );
}

const styles = StyleSheet.create({
  root: { gap: space.sm },
  actions: { flexDirection: "row", flexWrap: "wrap", gap: space.sm },
});
