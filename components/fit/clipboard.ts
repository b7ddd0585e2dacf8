/**
 * Copying text in the phone app: the system share sheet (which offers
 * "Copy"), since React Native has no built-in clipboard.
 */
import { Share } from "react-native";
import type { CopyOutcome } from "./clipboard-types";

export async function copyText(text: string): Promise<CopyOutcome> {
  await Share.share({ message: text });
  return "shared";
}
