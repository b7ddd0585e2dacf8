import type { ReactNode } from "react";
import { Redirect } from "expo-router";
import { View } from "react-native";
import { AppShell } from "./app-shell";
import { Failure, Pending } from "./ui";
import { palette } from "./theme";
import { useMe } from "../hooks/use-me";

/** Shows its children inside the app frame when signed in; otherwise sends the person to sign-in. */
export function SignedInGate(props: { children: ReactNode }) {
  const me = useMe();
  if (me.isPending) {
    return (
      <View style={{ flex: 1, backgroundColor: palette.canvas, justifyContent: "center" }}>
        <Pending />
      </View>
    );
  }
  if (me.isError) return <Failure error={me.error} onRetry={() => me.refetch()} />;
  if (!me.data) return <Redirect href="/sign-in" />;
  return <AppShell me={me.data}>{props.children}</AppShell>;
}
