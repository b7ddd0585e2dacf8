import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { apiFetch, jsonBody } from "./api";
import type { Role } from "../contract/permissions";
import type {
  InvitationPreview,
  MemberView as Member,
  InvitationView as PendingInvitation,
} from "../contract/views/team";
import { studyKeys } from "./use-studies";

// The API's own view types, shared with the server (contract/views/team.ts).
export type { InvitationPreview, Member, PendingInvitation };

export const teamKeys = {
  all: (studyId: string) => ["team", studyId] as const,
  members: (studyId: string) => [...teamKeys.all(studyId), "members"] as const,
  invitations: (studyId: string) => [...teamKeys.all(studyId), "invitations"] as const,
  invitation: (token: string) => ["invitation", token] as const,
};

const base = (studyId: string) => `/api/studies/${encodeURIComponent(studyId)}`;

export const membersQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: teamKeys.members(studyId),
    queryFn: () => apiFetch<Member[]>(`${base(studyId)}/members`),
  });

export const invitationsQueryOptions = (studyId: string) =>
  queryOptions({
    queryKey: teamKeys.invitations(studyId),
    queryFn: () => apiFetch<PendingInvitation[]>(`${base(studyId)}/invitations`),
  });

export const invitationPreviewQueryOptions = (token: string) =>
  queryOptions({
    queryKey: teamKeys.invitation(token),
    queryFn: () => apiFetch<InvitationPreview>(`/api/invitations/${encodeURIComponent(token)}`),
  });

export function useMembers(studyId: string) {
  return useQuery(membersQueryOptions(studyId));
}

export function usePendingInvitations(studyId: string, enabled: boolean) {
  return useQuery({ ...invitationsQueryOptions(studyId), enabled });
}

export function useInvitationPreview(token: string) {
  return useQuery(invitationPreviewQueryOptions(token));
}

function useTeamMutation<TInput, TResult>(
  studyId: string,
  run: (input: TInput) => Promise<TResult>,
) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: run,
    onSuccess: async () => {
      await client.invalidateQueries({ queryKey: teamKeys.all(studyId) });
      await client.invalidateQueries({ queryKey: studyKeys.all });
      await client.invalidateQueries({ queryKey: ["activity", studyId] });
    },
  });
}

export function useInvite(studyId: string) {
  return useTeamMutation(studyId, (input: { email: string; role: Role }) =>
    apiFetch<PendingInvitation>(`${base(studyId)}/invitations`, jsonBody("POST", input)),
  );
}

export function useRevokeInvitation(studyId: string) {
  return useTeamMutation(studyId, (invitationId: string) =>
    apiFetch<void>(`${base(studyId)}/invitations/${encodeURIComponent(invitationId)}`, {
      method: "DELETE",
    }),
  );
}

export function useChangeRole(studyId: string) {
  return useTeamMutation(studyId, (input: { userId: string; role: Role }) =>
    apiFetch<Member>(
      `${base(studyId)}/members/${encodeURIComponent(input.userId)}`,
      jsonBody("PATCH", { role: input.role }),
    ),
  );
}

export function useRemoveMember(studyId: string) {
  return useTeamMutation(studyId, (userId: string) =>
    apiFetch<void>(`${base(studyId)}/members/${encodeURIComponent(userId)}`, { method: "DELETE" }),
  );
}

export function useAcceptInvitation(token: string) {
  const client = useQueryClient();
  return useMutation({
    mutationFn: () =>
      apiFetch<{ studyId: string; role: Role }>(
        `/api/invitations/${encodeURIComponent(token)}/accept`,
        { method: "POST" },
      ),
    onSuccess: () => client.invalidateQueries({ queryKey: studyKeys.all }),
  });
}
