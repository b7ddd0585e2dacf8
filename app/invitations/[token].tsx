import { useLocalSearchParams } from "expo-router";
import { InvitationScreen } from "../../components/invitation-screen";

export default function InvitationRoute() {
  const { token } = useLocalSearchParams<{ token: string }>();
  return <InvitationScreen token={String(token)} />;
}
