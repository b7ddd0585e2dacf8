import { ScrollView, StyleSheet, View } from "react-native";
import { useRouter } from "expo-router";
import { Wordmark } from "./logo";
import { EmailSignIn } from "./sign-in-screen";
import { Button, Card, Failure, Heading, Notice, Pending, Txt } from "./ui";
import { palette, space } from "./theme";
import { roleLabel } from "./studies-screen";
import { useAcceptInvitation, useInvitationPreview } from "../hooks/use-team";
import { useMe } from "../hooks/use-me";
import { useAuthOptions, useSignOut } from "../hooks/use-auth";
import { mutateThen } from "../hooks/mutate-then";

/** The page an invitation e-mail links to: who invites whom to what, and the accept button. */
export function InvitationScreen(props: { token: string }) {
  const preview = useInvitationPreview(props.token);
  const me = useMe();
  const options = useAuthOptions();
  const accept = useAcceptInvitation(props.token);
  const signOut = useSignOut(`/invitations/${encodeURIComponent(props.token)}`);
  const router = useRouter();
  return (
    <ScrollView style={styles.root} contentContainerStyle={styles.content}>
      <View style={styles.column}>
        <Wordmark />
        {preview.isPending || me.isPending ? (
          <Pending />
        ) : preview.isError ? (
          <Failure error={preview.error} title="This invitation could not be found" />
        ) : (
          <Card testID="invitation">
            <Heading level={2}>Invitation to “{preview.data.studyName}”</Heading>
            <Txt>
              {preview.data.invitedBy.name ?? preview.data.invitedBy.email ?? "A study Owner"}{" "}
              invites {preview.data.email} to join as {roleLabel(preview.data.role)}.
            </Txt>
            {preview.data.status !== "pending" ? (
              <Notice tone="danger">
                This invitation is {preview.data.status}. Ask the study's Owner for a new one.
              </Notice>
            ) : !me.data ? (
              <>
                <Notice>Sign in as {preview.data.email} to accept.</Notice>
                {options.data?.email ? (
                  <EmailSignIn
                    providerId={options.data.email.providerId}
                    mailbox={options.data.mailbox}
                    initialEmail={preview.data.email}
                    callbackPath={`/invitations/${props.token}`}
                  />
                ) : null}
              </>
            ) : me.data.email.toLowerCase() !== preview.data.email.toLowerCase() ? (
              <>
                <Notice tone="danger">
                  You are signed in as {me.data.email}, but this invitation is for{" "}
                  {preview.data.email}. Sign out to continue as {preview.data.email}; you come back
                  to this invitation.
                </Notice>
                {signOut.error ? <Notice tone="danger">{signOut.error.message}</Notice> : null}
                <Button
                  label="Sign out and continue"
                  testID="sign-out-and-continue"
                  busy={signOut.isPending}
                  onPress={() => signOut.mutate()}
                />
              </>
            ) : (
              <>
                {accept.error ? <Notice tone="danger">{accept.error.message}</Notice> : null}
                <Button
                  label="Accept invitation"
                  testID="accept-invitation"
                  busy={accept.isPending}
                  onPress={() =>
                    mutateThen(accept, undefined, (result) =>
                      router.replace(`/studies/${result.studyId}`),
                    )
                  }
                />
              </>
            )}
            <Txt kind="caption">Expires {new Date(preview.data.expiresAt).toLocaleString()}.</Txt>
          </Card>
        )}
      </View>
    </ScrollView>
  );
}

const styles = StyleSheet.create({
  root: { flex: 1, backgroundColor: palette.canvas },
  content: { padding: space.lg, paddingTop: space.xxl, alignItems: "center" },
  column: { width: "100%", maxWidth: 560, gap: space.lg },
});
