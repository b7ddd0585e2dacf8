/**
 * The API's view of one event of a study's audit trail
 * (GET /api/studies/:studyId/activity), as the server sends it
 * (server/services/audit.ts) and the web app reads it.
 */
export interface ActivityEvent {
  id: string;
  /** The trail's order: larger is newer. */
  seq: number;
  /** e.g. "invitation.sent", "fit.sealed" */
  kind: string;
  at: string;
  /** Who did it; null for the system. */
  actor: { id: string; name: string | null; email: string | null } | null;
  targetType: string | null;
  targetId: string | null;
  before: unknown;
  after: unknown;
}
