/**
 * The API's views of a study's team: its members, its invitations and the
 * preview an invited person sees before accepting, as the server sends them
 * (server/services/members.ts, invitations.ts) and the web app reads them.
 */
import type { Role } from "../permissions";

export interface MemberView {
  userId: string;
  email: string | null;
  name: string | null;
  role: Role;
  joinedAt: string;
}

export type InvitationStatus = "pending" | "accepted" | "revoked" | "expired";

/** An invitation as the study's Owner sees it. */
export interface InvitationView {
  id: string;
  email: string;
  role: Role;
  status: InvitationStatus;
  invitedBy: { id: string; name: string | null; email: string | null };
  createdAt: string;
  expiresAt: string;
}

/** What the invited person sees before accepting (GET /api/invitations/:token). */
export interface InvitationPreview {
  studyName: string;
  email: string;
  role: Role;
  status: InvitationStatus;
  invitedBy: { name: string | null; email: string | null };
  expiresAt: string;
}
