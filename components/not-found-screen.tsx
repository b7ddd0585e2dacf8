import { ScrollView, StyleSheet, View } from "react-native";
import { Link } from "expo-router";
import { Wordmark } from "./logo";
import { Heading, Txt } from "./ui";
import { palette, space } from "./theme";

export function NotFoundScreen() {
  return (
    <ScrollView style={styles.root} contentContainerStyle={styles.content}>
      <View style={styles.column}>
        <Wordmark />
        <Heading>Page not found</Heading>
        <Txt style={{ color: palette.muted }}>
          There is nothing at this address. It may have moved, or you may not have access to it.
        </Txt>
        <Link href="/studies" style={{ color: palette.focus, fontWeight: "600" }}>
          Go to your studies
        </Link>
      </View>
    </ScrollView>
  );
}

const styles = StyleSheet.create({
  root: { flex: 1, backgroundColor: palette.canvas },
  content: { padding: space.xl, alignItems: "center" },
  column: { width: "100%", maxWidth: 560, gap: space.lg },
});
