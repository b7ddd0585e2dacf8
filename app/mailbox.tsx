import { MailboxScreen } from "../components/mailbox-screen";

export default function MailboxRoute() {
  return <MailboxScreen />;
}
