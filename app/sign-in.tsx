import { useLocalSearchParams } from "expo-router";
import { SignInScreen } from "../components/sign-in-screen";
import { describeAuthError } from "../hooks/use-auth";

export default function SignInRoute() {
  const { error } = useLocalSearchParams<{ error?: string }>();
  return <SignInScreen error={error ? describeAuthError(error) : undefined} />;
}
