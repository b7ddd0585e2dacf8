/**
 * A download in the browser: a real link with the `download` attribute, so
 * the browser saves the file the server names (with the session cookie, on
 * the same origin) and the page stays where it is.
 */
import type { CSSProperties } from "react";
import { fonts, palette, radius, space, type } from "../theme";
import type { DownloadLinkProps } from "./download-link-types";

/** The look of a download (also the planner's posted downloads, post-download-link.web.tsx). */
export const downloadLinkStyle: CSSProperties = {
  display: "inline-flex",
  alignItems: "center",
  alignSelf: "flex-start",
  minHeight: 44,
  boxSizing: "border-box",
  paddingLeft: space.lg,
  paddingRight: space.lg,
  borderRadius: radius.md,
  border: `1px solid ${palette.lineStrong}`,
  backgroundColor: palette.surface,
  color: palette.ink,
  fontFamily: fonts.semibold,
  fontSize: type.body,
  textDecoration: "none",
};

export function DownloadLink(props: DownloadLinkProps) {
  return (
    <a href={props.href} download data-testid={props.testID} style={downloadLinkStyle}>
      {props.label}
    </a>
  );
}
