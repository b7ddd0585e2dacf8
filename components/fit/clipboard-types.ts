/** How a text left the app: copied to the clipboard (web) or handed to the system share sheet (phone app). */
export type CopyOutcome = "copied" | "shared";
