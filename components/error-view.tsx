import { ScrollView, StyleSheet, View } from "react-native";
import { Button, Heading, Txt } from "./ui";
import { palette, space } from "./theme";

/** What a person sees when a screen throws: what happened and a way back. */
export function ErrorView(props: { error: Error; retry: () => void }) {
  return (
    <ScrollView style={styles.root} contentContainerStyle={styles.content}>
      <View style={styles.column} accessibilityRole="alert">
        <Heading>Something went wrong</Heading>
        <Txt style={{ color: palette.muted }}>{props.error.message}</Txt>
        <Button label="Try again" onPress={props.retry} />
      </View>
    </ScrollView>
  );
}

const styles = StyleSheet.create({
  root: { flex: 1, backgroundColor: palette.canvas },
  content: { padding: space.xl, alignItems: "center" },
  column: { width: "100%", maxWidth: 560, gap: space.lg },
});
