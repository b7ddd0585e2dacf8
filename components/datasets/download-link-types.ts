/** Props shared by the web and native download links. */
export interface DownloadLinkProps {
  label: string;
  /** Address of the file (same origin as the app). */
  href: string;
  testID?: string;
}
