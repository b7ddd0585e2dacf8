import { useState } from "react";
import { ScrollView, StyleSheet, View } from "react-native";
import { Link } from "expo-router";
import { useQueryClient } from "@tanstack/react-query";
import { useRouter } from "expo-router";
import { Wordmark } from "./logo";
import { Button, Card, Failure, Field, Heading, Notice, Pending, Txt } from "./ui";
import { palette, space } from "./theme";
import {
  useAuthOptions,
  useDemoSignIn,
  useEmailSignIn,
  useInstitutionSignIn,
  type AuthOptions,
} from "../hooks/use-auth";
import { meKeys } from "../hooks/use-me";
import { researchUseCaution } from "../contract/cautions";
import { mutateThen } from "../hooks/mutate-then";

const roleBlurb: Record<string, string> = {
  owner: "manages members and can do everything",
  analyst: "uploads data, builds models, runs fits",
  reviewer: "reads everything, approves fits for sealing",
  viewer: "reads results only",
};

export function SignInScreen(props: { error?: string }) {
  const options = useAuthOptions();
  return (
    <ScrollView style={styles.root} contentContainerStyle={styles.content}>
      <View style={styles.column}>
        <Wordmark size={26} />
        <Txt kind="lead" style={styles.tagline}>
          Relate each participant's brain contrast values to who they are — with numbers you can
          defend.
        </Txt>
        {props.error ? <Notice tone="danger">{props.error}</Notice> : null}
        {options.isPending ? (
          <Pending />
        ) : options.isError ? (
          <Failure error={options.error} onRetry={() => options.refetch()} />
        ) : (
          <Methods options={options.data} />
        )}
        <Txt kind="caption">{researchUseCaution}</Txt>
      </View>
    </ScrollView>
  );
}

function Methods({ options }: { options: AuthOptions }) {
  return (
    <View style={{ gap: space.lg }}>
      {options.email ? (
        <EmailSignIn providerId={options.email.providerId} mailbox={options.mailbox} />
      ) : null}
      {options.institution ? (
        <InstitutionSignIn
          providerId={options.institution.providerId}
          name={options.institution.name}
        />
      ) : null}
      {options.demoAccounts.length > 0 ? <DemoAccounts accounts={options.demoAccounts} /> : null}
    </View>
  );
}

export function EmailSignIn({
  providerId,
  mailbox,
  initialEmail = "",
  callbackPath,
}: {
  providerId: string;
  mailbox: boolean;
  initialEmail?: string;
  callbackPath?: string;
}) {
  const [email, setEmail] = useState(initialEmail);
  const [invalid, setInvalid] = useState<string | null>(null);
  const signIn = useEmailSignIn(providerId, callbackPath);
  const submit = () => {
    const trimmed = email.trim();
    if (!/^[^\s@]+@[^\s@]+\.[^\s@]+$/.test(trimmed)) {
      setInvalid("Enter an e-mail address such as name@lab.example.");
      return;
    }
    setInvalid(null);
    signIn.mutate(trimmed);
  };
  if (signIn.isSuccess) {
    return (
      <Card testID="email-sent">
        <Heading level={2}>Check your e-mail</Heading>
        <Txt>We sent a sign-in link to {email.trim()}. It works once and expires in 24 hours.</Txt>
        {mailbox ? (
          <Link href="/mailbox" style={styles.link}>
            Open the demo Mailbox
          </Link>
        ) : null}
        <Button label="Use another address" variant="secondary" onPress={() => signIn.reset()} />
      </Card>
    );
  }
  return (
    <Card>
      <Heading level={2}>Sign in with an e-mail link</Heading>
      <Field
        label="E-mail address"
        value={email}
        onChangeText={setEmail}
        autoCapitalize="none"
        autoComplete="email"
        inputMode="email"
        placeholder="name@lab.example"
        error={invalid ?? (signIn.error ? signIn.error.message : null)}
        onSubmitEditing={submit}
        testID="email-input"
      />
      <Button
        label="Send sign-in link"
        onPress={submit}
        busy={signIn.isPending}
        testID="send-link"
      />
    </Card>
  );
}

function InstitutionSignIn({ providerId, name }: { providerId: string; name: string }) {
  const signIn = useInstitutionSignIn(providerId);
  return (
    <Card>
      <Heading level={2}>Institution sign-in</Heading>
      <Txt kind="small" style={{ color: palette.muted }}>
        Use your institution's account — {name}.
      </Txt>
      {signIn.error ? <Notice tone="danger">{signIn.error.message}</Notice> : null}
      <Button
        label={`Continue with ${name}`}
        variant="secondary"
        onPress={() => signIn.mutate()}
        busy={signIn.isPending}
        testID="institution-sign-in"
      />
    </Card>
  );
}

function DemoAccounts({ accounts }: { accounts: AuthOptions["demoAccounts"] }) {
  const signIn = useDemoSignIn();
  const client = useQueryClient();
  const router = useRouter();
  return (
    <Card testID="demo-accounts">
      <Heading level={2}>Demo accounts</Heading>
      <Txt kind="small" style={{ color: palette.muted }}>
        This server runs in demo mode with an invented study. One tap signs you in as one of its
        team.
      </Txt>
      {signIn.error ? <Notice tone="danger">{signIn.error.message}</Notice> : null}
      {accounts.map((account) => (
        <Button
          key={account.email}
          variant="secondary"
          label={`${account.name} — ${account.role}`}
          accessibilityLabel={`Sign in as the demo ${account.role}`}
          onPress={() =>
            mutateThen(signIn, account.email, async () => {
              await client.invalidateQueries({ queryKey: meKeys.all });
              router.replace("/studies");
            })
          }
          busy={signIn.isPending && signIn.variables === account.email}
        />
      ))}
      <Txt kind="caption">
        {Object.entries(roleBlurb)
          .map(([role, text]) => `${role}: ${text}`)
          .join(" · ")}
      </Txt>
    </Card>
  );
}

const styles = StyleSheet.create({
  root: { flex: 1, backgroundColor: palette.canvas },
  content: { padding: space.lg, paddingTop: space.xxxl, alignItems: "center" },
  column: { width: "100%", maxWidth: 480, gap: space.xl },
  tagline: { color: palette.inkSoft },
  link: { color: palette.focus, fontWeight: "600" },
});
