import { ScrollView, StyleSheet, View } from "react-native";
import { Link } from "expo-router";
import { Card, Empty, Failure, Heading, Notice, Pending, Txt } from "./ui";
import { Wordmark } from "./logo";
import { palette, space } from "./theme";
import { ApiError } from "../hooks/api";
import { mailSegments, useMail } from "../hooks/use-mail";
import { NotFoundScreen } from "./not-found-screen";

/** Demo-mode inbox of the local mail fake: sign-in links and invitations land here. */
export function MailboxScreen() {
  const mail = useMail();
  // Without the local mail fake (production) the mailbox does not exist: the server answers this page and its API with 404.
  if (mail.error instanceof ApiError && mail.error.status === 404) return <NotFoundScreen />;
  return (
    <ScrollView style={styles.root} contentContainerStyle={styles.content}>
      <View style={styles.column}>
        <Wordmark />
        <Heading>Mailbox</Heading>
        <Notice>
          Demo mode: e-mail sent by this server is caught here instead of being delivered.
        </Notice>
        {mail.isPending ? (
          <Pending />
        ) : mail.isError ? (
          <Failure error={mail.error} onRetry={() => mail.refetch()} />
        ) : mail.data.length === 0 ? (
          <Empty title="No messages yet" />
        ) : (
          mail.data.map((message) => (
            <Card key={message.id} testID="mail-message">
              <Txt kind="label">{message.subject}</Txt>
              <Txt kind="caption">
                To {message.to} · {new Date(message.sentAt).toLocaleString()}
              </Txt>
              <Txt kind="small" selectable>
                {mailSegments(message.text.trim()).map((segment, i) =>
                  segment.kind === "text" ? (
                    segment.text
                  ) : (
                    <Link
                      // biome-ignore lint/suspicious/noArrayIndexKey: segments of one fixed message never reorder
                      key={i}
                      href={segment.href}
                      style={styles.link}
                      testID="mail-link"
                    >
                      {linkLabel(segment.href)}
                    </Link>
                  ),
                )}
              </Txt>
            </Card>
          ))
        )}
        <Link href="/sign-in" style={styles.link}>
          Back to sign-in
        </Link>
      </View>
    </ScrollView>
  );
}

function linkLabel(href: string): string {
  if (href.includes("/api/auth/callback")) return "Open the sign-in link";
  if (href.includes("/invitations/")) return "Open the invitation";
  return href;
}

const styles = StyleSheet.create({
  root: { flex: 1, backgroundColor: palette.canvas },
  content: { padding: space.lg, alignItems: "center" },
  column: { width: "100%", maxWidth: 720, gap: space.lg },
  link: { color: palette.focus, fontWeight: "600", paddingVertical: space.xs },
});
