/**
 * The signed-in person's e-mail notices of this study, on the Team screen:
 * one switch (the whole row is the tap target, at least 44 px high) with
 * what it sends and to whom (contract/notices.ts).
 */
import { Pressable, StyleSheet, Switch, View } from "react-native";
import { noticeSettingExplanation, noticeSettingLabel } from "../contract/notices";
import { useChangeNoticeSetting, useNoticeSetting } from "../hooks/use-notices";
import { Card, Failure, Heading, Notice, Pending, Txt } from "./ui";
import { space } from "./theme";

export function NoticeSetting({ studyId }: { studyId: string }) {
  const setting = useNoticeSetting(studyId);
  const change = useChangeNoticeSetting(studyId);
  return (
    <Card testID="notice-setting">
      <Heading level={2}>E-mail notices</Heading>
      {setting.isPending ? (
        <Pending />
      ) : setting.isError ? (
        <Failure error={setting.error} onRetry={() => setting.refetch()} />
      ) : (
        <Pressable
          accessibilityRole="switch"
          accessibilityLabel={noticeSettingLabel}
          aria-checked={setting.data.enabled}
          aria-busy={change.isPending}
          onPress={() => change.mutate({ enabled: !setting.data.enabled })}
          style={styles.row}
          testID="notice-switch"
        >
          <View style={styles.words}>
            <Txt kind="label">{noticeSettingLabel}</Txt>
            <Txt kind="caption">{noticeSettingExplanation}</Txt>
          </View>
          {/* The row takes the press; the switch only shows the state. */}
          <View pointerEvents="none" importantForAccessibility="no-hide-descendants">
            <Switch value={setting.data.enabled} />
          </View>
        </Pressable>
      )}
      {change.error ? <Notice tone="danger">{change.error.message}</Notice> : null}
    </Card>
  );
}

const styles = StyleSheet.create({
  row: {
    // 44 px: the smallest comfortable tap target (as the buttons in ui.tsx).
    minHeight: 44,
    flexDirection: "row",
    alignItems: "center",
    justifyContent: "space-between",
    gap: space.md,
  },
  words: { flexShrink: 1 },
});
