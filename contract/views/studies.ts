/**
 * The API's views of studies, as the server sends them
 * (server/services/studies.ts) and the web app reads them.
 */
import type { Action, Role } from "../permissions";

export interface StudyCounts {
  members: number;
  participants: number;
  models: number;
  fits: number;
  /** Sealed fits: while there is one, the study can be archived but not deleted. */
  sealedFits: number;
}

export interface StudySummary {
  id: string;
  name: string;
  description: string;
  restricted: boolean;
  role: Role;
  counts: StudyCounts;
  createdAt: string;
  updatedAt: string;
  /** When the study was archived (read-only for every role), or null. */
  archivedAt: string | null;
}

export interface StudyDetail extends StudySummary {
  /** Actions the caller's role allows in this study as it is now (contract/permissions.ts). */
  capabilities: Action[];
  /** The setting "A second person signs off" (contract/sign-off.ts): while true, whoever started a fit cannot approve it. */
  secondPersonSignOff: boolean;
}

/** The fields of a study a change may set (PATCH /api/studies/:studyId). */
export interface StudyChanges {
  name?: string;
  description?: string;
  restricted?: boolean;
  secondPersonSignOff?: boolean;
}

/** A deleted study its Owner may still restore. */
export interface DeletedStudy {
  id: string;
  name: string;
  description: string;
  deletedAt: string;
  deletedBy: { id: string; name: string | null } | null;
  /** The last moment it can be restored. */
  restorableUntil: string;
}
