/**
 * A download on a phone or tablet app: opens the file's address with the
 * system, which hands it to the browser or a viewer.
 */
import { Linking } from "react-native";
import { Button } from "../ui";
import type { DownloadLinkProps } from "./download-link-types";

export function DownloadLink(props: DownloadLinkProps) {
  return (
    <Button
      label={props.label}
      variant="secondary"
      testID={props.testID}
      onPress={() => void Linking.openURL(props.href)}
    />
  );
}
