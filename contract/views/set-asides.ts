/**
 * The API's view of a set-aside (a participant excluded from every region
 * or from one, with a written reason), as the server sends it
 * (server/services/set-asides.ts) and the web app reads it.
 */
export interface SetAsideView {
  id: string;
  /** null when withheld from the reader (a reader who may not see participant-level rows). */
  participant: string | null;
  /** null = every region */
  region: string | null;
  reason: string;
  active: boolean;
  createdBy: { id: string; name: string | null };
  createdAt: string;
  restoredBy: { id: string; name: string | null } | null;
  restoredAt: string | null;
  restoreReason: string | null;
}
