import { Slot } from "expo-router";
import { SignedInGate } from "../../components/signed-in-gate";

export default function SignedInLayout() {
  return (
    <SignedInGate>
      <Slot />
    </SignedInGate>
  );
}
