/** Props shared by the web and native downloads of a file the server draws from a posted question. */
export interface PostDownloadLinkProps {
  label: string;
  /** The name the file is saved under. */
  fileName: string;
  /** Posts the question and answers the file (rejects with the server's refusal). */
  fetchFile: () => Promise<Blob>;
  /** Told the refusal when a download fails, null when one succeeds. */
  onError?: (error: Error | null) => void;
  testID?: string;
}
